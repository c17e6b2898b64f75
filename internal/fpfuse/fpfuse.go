// Package fpfuse tells whether this build fuses floating-point multiply
// and add into one instruction with a single rounding.
//
// The Go specification lets a compiler fuse x*y + z (The Go Programming
// Language Specification, "Floating-point operators"); gc does so on
// arm64, ppc64, s390x, riscv64 and on amd64 built with GOAMD64=v3 or
// later, and not on amd64 v1 or v2. Code whose sums are written
// differently, but in the same order, gives the same bits only where
// nothing is fused: tests that pin bits against a reference copy skip
// themselves on a fusing build.
package fpfuse

// x, y and z are the probe's operands.
var x, y, z = 1 + 0x1p-30, 1 - 0x1p-30, -1.0

// Fuses reports whether this build fused the probe x*y + z, whose
// product 1 − 2⁻⁶⁰ rounds to 1 on its own: unfused the probe is 0, fused
// it is −2⁻⁶⁰.
func Fuses() bool { return probe(x, y, z) != 0 }

// probe is not inlined, so that its operands are not constants however
// the compiler treats x, y and z.
//
//go:noinline
func probe(a, b, c float64) float64 { return a*b + c }
