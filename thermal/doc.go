// Package thermal solves the heat flow from a hob into a pan base on the base
// grid, reduces it to rings, and integrates the heat-up of a water load.
//
// All quantities are SI: m, K, W, W/m², W/(m²·K), J.
package thermal
