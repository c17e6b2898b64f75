// Package contact finds how a pan base rests on a hob and what the interface
// between them conducts: the rest pose (tilt, support points, rocking), the
// gap and contact map, and each cell's interface conductance split into solid
// spots, gas and radiation.
//
// All quantities are SI: m, Pa, K, W/(m²·K).
package contact
