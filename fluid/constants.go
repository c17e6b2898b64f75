package fluid

// Physical constants, SI.
const (
	// StefanBoltzmann is the Stefan–Boltzmann constant, W/(m²·K⁴);
	// CODATA 2018, exact from the defined SI constants.
	StefanBoltzmann = 5.670374419e-8

	// StandardGravityMS2 is standard gravity, m/s² (CGPM 1901, exact).
	StandardGravityMS2 = 9.80665

	// StandardPressurePa is one standard atmosphere, Pa (exact).
	StandardPressurePa = 101325.0

	// GasConstantJMolK is the molar gas constant, J/(mol·K); CODATA 2018,
	// exact.
	GasConstantJMolK = 8.314462618

	// AirMolarMassKgMol is the molar mass of dry air, kg/mol
	// (28.9647 g/mol; from memory, PHYSICS-REFERENCES.md item 0 [M]).
	AirMolarMassKgMol = 28.9647e-3

	// CelsiusZeroK is 0 °C in kelvin (exact).
	CelsiusZeroK = 273.15
)
