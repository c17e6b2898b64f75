// Package bow computes the thermal bending of a pan base on the base grid:
// the deflection a base takes on the hob because it is hotter underneath
// than on top, and because a clad base's layers expand differently as its
// mean temperature rises above the temperature at which it was scanned.
//
// The base is a Kirchhoff plate built of isotropic layers. Classical
// lamination theory gives its in-plane, coupling and bending stiffnesses
// (A, B, D) and the thermal force and moment resultants (N_T, M_T) of the
// temperature field through the thickness (Laminate). The membrane forces
// are taken as zero (an in-plane free base), which reduces the laminate to
// an isotropic plate of bending stiffness D* = D − B A⁻¹ B loaded by the
// thermal moment M_T* = M_T − B A⁻¹ N_T (the reduced-bending-stiffness
// approach; Whitney, Structural Analysis of Laminated Anisotropic Plates,
// 1987, ch. 2). The plate is solved by conforming Bogner–Fox–Schmit finite
// elements on a square bending grid coarser than the base grid, with the
// rim free, clamped, or restrained in rotation by the pan's wall (Solver).
//
// All quantities are SI: m, K, W/m², Pa, N·m/m. The deflection w is along
// +z of the base frame (into the pan).
package bow
