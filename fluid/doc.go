// Package fluid gives the properties of air at 1 atm and of saturated liquid
// water, interpolated in handbook tables, in SI units, and the mean free path
// of air for gas-gap rarefaction.
//
// The tables are those of Incropera & DeWitt, Fundamentals of Heat and Mass
// Transfer (Table A.4, air, 250–1000 K; Table A.6, saturated water,
// 273.15–373.15 K). Between rows every property is interpolated linearly in
// temperature. AirAt and WaterAt return an error outside their table; only
// the viscosity of air (and so its mean free path) is extended beyond the
// table, by Sutherland's law.
package fluid
