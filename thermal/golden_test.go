package thermal

import (
	"fmt"
	"gapflux/internal/fpfuse"
	"hash/fnv"
	"math"
	"testing"
)

// goldenBits is the bit pattern of a solution recorded at commit 58dba45,
// before the solver's outer iteration was made cheaper: the solver's
// speed-ups must leave every floating-point value of every cell the same to
// the bit, and the iteration counts the same.
type goldenBits struct {
	digest       uint64 // solutionDigest
	power, glass uint64 // math.Float64bits of PowerW and GlassMaxK
	outer, lin   int
}

func (g goldenBits) String() string {
	return fmt.Sprintf("{digest: %#x, power: %#x, glass: %#x, outer: %d, lin: %d}", g.digest, g.power, g.glass, g.outer, g.lin)
}

// solutionDigest returns an FNV-1a hash of the bits of every per-cell
// field of s (TPanK, TGlassK, FluxWM2, SolidWM2K, GasWM2K, RadWM2K, in that
// order) and of its totals, so that a change of any one bit anywhere
// changes it.
func solutionDigest(s *Solution) uint64 {
	h := fnv.New64a()
	var buf [8]byte
	put := func(v float64) {
		b := math.Float64bits(v)
		for i := range buf {
			buf[i] = byte(b >> (8 * i))
		}
		h.Write(buf[:])
	}
	for _, f := range [][]float64{s.TPanK, s.TGlassK, s.FluxWM2, s.SolidWM2K, s.GasWM2K, s.RadWM2K} {
		put(float64(len(f)))
		for _, v := range f {
			put(v)
		}
	}
	for _, v := range []float64{s.PowerW, s.SolidW, s.GasW, s.RadW, s.TransmittedW, s.HeaterW, s.DutyPct,
		s.TransmittedLostW, s.TransmittedShare, s.CoilK, s.RodK, s.DownLossW, s.UncoveredLossW, s.GlassMaxK,
		s.WaterW, s.TopShiftK, s.RelResidual} {
		put(v)
	}
	return h.Sum64()
}

// goldenScenes returns the problems of TestGoldenBits by name: heaterFine's
// scene on 2 mm cells, the pipeline's kind of heater (coil, rod limiter,
// boiling water), a small pan with much uncovered glass and natural
// convection water, a warm start, and temperature-mode scenes (a boiling-
// like water side with a radiating interface, and a rated power limit).
func goldenScenes(t *testing.T) map[string]*Problem {
	t.Helper()
	fine2 := func() *Problem {
		p := heaterScene(0.002, stubRad{gas: 60, eps1: 0.9, eps2: 0.3})
		p.Water = FixedWater{HWM2K: 1000}
		p.TWaterK = 333.15
		return p
	}
	coil := fine2()
	coil.Heater.Coil = &Coil{Emissivity: 0.85, BandLoM: 0.7e-6, BandHiM: 2.7e-6, Tau: 0.65}
	coil.Heater.Rod = &Rod{OffsetM: 0.01, LengthM: 0.15}
	coil.PanEmissivity = 0.3
	coil.Water = BoilingWater{Csf: CsfStainlessMechPolished, DiameterM: 0.2}
	coil.TWaterK = 368.15
	small := heaterScene(0.002, stubRad{gas: 300, eps1: 0.9, eps2: 0.6})
	small.InBase = discMask(small.Grid, 0.01, 0, 0.07)
	small.Heater.TransmittedFraction = 0.1
	small.Water = NaturalWater{DiameterM: 0.14}
	prev, err := Solve(fine2())
	if err != nil {
		t.Fatal(err)
	}
	warm := fine2()
	warm.TWaterK = 343.15
	warm.InitialTPanK, warm.InitialTGlassK, warm.InitialDutyPct = prev.TPanK, prev.TGlassK, prev.DutyPct
	temp := patchProblem(96, 0.002, 0.01)
	temp.Interface = stubRad{gas: 300, eps1: 0.9, eps2: 0.3}
	temp.Water = stubOnset{}
	temp.TWaterK = 353.15
	temp.Temperature.TopK = fill(temp.Grid.Len(), 620)
	limited := patchProblem(96, 0.002, 0.01)
	limited.Temperature.RatedPowerW = 400
	return map[string]*Problem{"heaterFine2mm": fine2(), "coilRodBoiling": coil, "smallPanNatural": small,
		"warm": warm, "temperatureOnset": temp, "powerLimited": limited}
}

// golden holds the bits of goldenScenes' solutions at commit 58dba45.
var golden = map[string]goldenBits{
	"heaterFine2mm":    {digest: 0x15a067705f8ffb6, power: 0x40885e92023c3519, glass: 0x408a093333333333, outer: 7, lin: 13},
	"coilRodBoiling":   {digest: 0x3b3ee5d6325240d1, power: 0x4088ba4d2fb91b75, glass: 0x40895d7f9212344a, outer: 7, lin: 13},
	"smallPanNatural":  {digest: 0xe5c511856d52d694, power: 0x40852c3252f1989e, glass: 0x408a093333333333, outer: 7, lin: 14},
	"warm":             {digest: 0x23df597fa79688b6, power: 0x4087e7b6c10c3357, glass: 0x408a093333333333, outer: 6, lin: 11},
	"temperatureOnset": {digest: 0xf92225654c317d1b, power: 0x40a0047ea0104c84, glass: 0x0, outer: 6, lin: 9},
	"powerLimited":     {digest: 0x76fa7e34157697f0, power: 0x40790000000038a8, glass: 0x0, outer: 3, lin: 9},
}

// TestGoldenBits: the solutions of goldenScenes keep the bits and the
// iteration counts they had before the outer iteration's work was cut.
func TestGoldenBits(t *testing.T) {
	if fpfuse.Fuses() {
		t.Skip("this build fuses multiply-add (internal/fpfuse): the bits were recorded on amd64 without it")
	}
	for name, p := range goldenScenes(t) {
		s, err := Solve(p)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		got := goldenBits{digest: solutionDigest(s), power: math.Float64bits(s.PowerW),
			glass: math.Float64bits(s.GlassMaxK), outer: s.OuterIterations, lin: s.LinearIterations}
		if want, ok := golden[name]; !ok || got != want {
			t.Errorf("%s: got %s, want %s (power %.17g W, glass max %.17g K)", name, got, want, s.PowerW, s.GlassMaxK)
		}
	}
}
