// Package fluid gives the properties of air at 1 atm and of saturated liquid
// water, interpolated in handbook tables, in SI units.
package fluid
