package contact

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"gapflux/scan"
)

func TestFlatHob(t *testing.T) {
	pan := testDisc(21, cellTM, 10*mmM, func(x, y float64) float64 { return 1 })
	pan.State[pan.Index(10, 10)] = scan.Filled
	h := FlatHob(pan)
	if err := sameGrid(pan, h); err != nil {
		t.Fatal(err)
	}
	for k := range h.ZM {
		switch {
		case pan.InBase(k) && (h.ZM[k] != 0 || h.State[k] != scan.Measured):
			t.Fatalf("base cell %d: z %g, %v; want 0, measured", k, h.ZM[k], h.State[k])
		case !pan.InBase(k) && (!math.IsNaN(h.ZM[k]) || h.State[k] != scan.Outside):
			t.Fatalf("outside cell %d: z %g, %v; want NaN, outside", k, h.ZM[k], h.State[k])
		}
	}
}

func TestRadialHob(t *testing.T) {
	pan := testDisc(41, cellTM, 20*mmM, func(x, y float64) float64 { return 0 })
	rM := []float64{2 * mmM, 10 * mmM, 30 * mmM}
	zM := []float64{0.1 * mmM, -0.1 * mmM, 0.3 * mmM}
	// Linear interpolation by hand: held at 0.1 mm inside r = 2 mm, then
	// −0.025 mm per mm to r = 10 mm, +0.02 mm per mm to 30 mm, held beyond.
	want := func(r float64) float64 {
		switch {
		case r <= 2*mmM:
			return 0.1 * mmM
		case r <= 10*mmM:
			return 0.1*mmM - 0.025*(r-2*mmM)
		case r <= 30*mmM:
			return -0.1*mmM + 0.02*(r-10*mmM)
		}
		return 0.3 * mmM
	}
	for _, off := range [][2]float64{{0, 0}, {15 * mmM, -4 * mmM}} {
		h, err := RadialHob(pan, rM, zM, off)
		if err != nil {
			t.Fatal(err)
		}
		for j := 0; j < pan.Ny; j++ {
			for i := 0; i < pan.Nx; i++ {
				k := pan.Index(i, j)
				if !pan.InBase(k) {
					if h.State[k] != scan.Outside {
						t.Fatalf("cell (%d, %d) outside the base is %v", i, j, h.State[k])
					}
					continue
				}
				r := math.Hypot(pan.X(i)+off[0], pan.Y(j)+off[1])
				if math.Abs(h.ZM[k]-want(r)) > 1e-15 || h.State[k] != scan.Measured {
					t.Fatalf("offset %v, cell (%d, %d), r %g mm: z %g, want %g", off, i, j, r/mmM, h.ZM[k], want(r))
				}
			}
		}
	}
	single, err := RadialHob(pan, []float64{0}, []float64{0.2 * mmM}, [2]float64{})
	if err != nil || single.ZM[pan.Index(0, 20)] != 0.2*mmM {
		t.Errorf("one-point profile: %v, z %g; want 0.2 mm everywhere", err, single.ZM[pan.Index(0, 20)])
	}

	bad := []struct {
		name   string
		rM, zM []float64
		off    [2]float64
		want   string
	}{
		{"empty", nil, nil, [2]float64{}, "empty"},
		{"lengths", []float64{0, 1}, []float64{0}, [2]float64{}, "2 radii and 1 heights"},
		{"negative r", []float64{-1e-3, 1e-3}, []float64{0, 0}, [2]float64{}, "negative"},
		{"not increasing", []float64{0, 1e-3, 1e-3}, []float64{0, 0, 0}, [2]float64{}, "does not increase"},
		{"NaN z", []float64{0, 1e-3}, []float64{0, math.NaN()}, [2]float64{}, "not finite"},
		{"NaN offset", []float64{0}, []float64{0}, [2]float64{math.NaN(), 0}, "offset"},
	}
	for _, tc := range bad {
		if _, err := RadialHob(pan, tc.rM, tc.zM, tc.off); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want one containing %q", tc.name, err, tc.want)
		}
	}
}

func TestReadRadialProfile(t *testing.T) {
	good := []struct {
		name   string
		in     string
		rM, zM []float64
	}{
		{"plain", "r_mm,z_mm\n0,0.1\n50,0\n100,-0.05\n", []float64{0, 0.05, 0.1}, []float64{0.1e-3, 0, -0.05e-3}},
		{"spaces, comments, blank lines, CRLF", "# hob profile\r\n R_MM , z_mm \r\n\r\n0, 0.25\r\n# mid\r\n 90 ,  -0.5\r\n",
			[]float64{0, 0.09}, []float64{0.25e-3, -0.5e-3}},
		{"exponent", "r_mm,z_mm\n1e1,2.5e-2\n", []float64{0.01}, []float64{2.5e-5}},
	}
	for _, tc := range good {
		rM, zM, err := ReadRadialProfile(strings.NewReader(tc.in), "p.csv")
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if len(rM) != len(tc.rM) || len(zM) != len(tc.zM) {
			t.Errorf("%s: %v %v, want %v %v", tc.name, rM, zM, tc.rM, tc.zM)
			continue
		}
		for i := range rM {
			if math.Abs(rM[i]-tc.rM[i]) > 1e-15 || math.Abs(zM[i]-tc.zM[i]) > 1e-15 {
				t.Errorf("%s: %v %v, want %v %v", tc.name, rM, zM, tc.rM, tc.zM)
				break
			}
		}
	}

	bad := []struct {
		name, in, want string
	}{
		{"empty", "", "p.csv: empty profile"},
		{"comments only", "# nothing\n", "p.csv: empty profile"},
		{"header only", "r_mm,z_mm\n", "header but no points"},
		{"wrong header", "r,z\n0,0\n", "p.csv:1: header"},
		{"header after comment", "# c\nradius_mm,z_mm\n", "p.csv:2: header"},
		{"three fields", "r_mm,z_mm\n0,0\n1,2,3\n", "p.csv:3: 3 fields"},
		{"one field", "r_mm,z_mm\n5\n", "p.csv:2: 1 fields"},
		{"not a number", "r_mm,z_mm\n0,0\n5,abc\n", `p.csv:3: z_mm is not a finite number`},
		{"NaN", "r_mm,z_mm\nNaN,0\n", `p.csv:2: r_mm is not a finite number`},
		{"infinite", "r_mm,z_mm\n0,Inf\n", `p.csv:2: z_mm is not a finite number`},
		{"negative radius", "r_mm,z_mm\n-1,0\n", "p.csv:2: negative radius"},
		{"decreasing", "r_mm,z_mm\n0,0\n10,0\n# x\n5,0\n", "p.csv:5: radius 5 mm does not increase"},
		{"repeated", "r_mm,z_mm\n0,0\n0,1\n", "p.csv:3: radius 0 mm does not increase"},
		{"unclosed quote", "r_mm,z_mm\n0,\"1\n", `p.csv:2: extraneous or missing "`},
		{"bare quote", "r_mm,z_mm\n0,1\n5,a\"b\n", `p.csv:3: bare "`},
	}
	for _, tc := range bad {
		_, _, err := ReadRadialProfile(strings.NewReader(tc.in), "p.csv")
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want one containing %q", tc.name, err, tc.want)
		}
	}
}

func TestResampleHob(t *testing.T) {
	// A hob scan on its own 2 mm grid covering ±60 mm, z = a plane plus a
	// product term: bilinear interpolation reproduces a·x + b·y + c·x·y + d
	// exactly on every cell.
	f := func(x, y float64) float64 { return 1e-3*x - 2e-3*y + 0.5*x*y + 0.1*mmM }
	hob := scan.NewSurface(61, 61, 2*mmM, -60*mmM, -60*mmM)
	for j := 0; j < hob.Ny; j++ {
		for i := 0; i < hob.Nx; i++ {
			k := hob.Index(i, j)
			hob.ZM[k] = f(hob.X(i), hob.Y(j))
			hob.State[k] = scan.Measured
		}
	}
	hob.State[hob.Index(40, 30)] = scan.Filled // at (20, 0) mm
	pan := testDisc(41, cellTM, 20*mmM, func(x, y float64) float64 { return 0 })
	off := [2]float64{7.3 * mmM, -3.1 * mmM}
	out, err := ResampleHob(hob, pan, off)
	if err != nil {
		t.Fatal(err)
	}
	if err := sameGrid(pan, out); err != nil {
		t.Fatal(err)
	}
	filled := 0
	for j := 0; j < pan.Ny; j++ {
		for i := 0; i < pan.Nx; i++ {
			k := pan.Index(i, j)
			if !pan.InBase(k) {
				if out.State[k] != scan.Outside || !math.IsNaN(out.ZM[k]) {
					t.Fatalf("cell (%d, %d) outside the base: %v %g", i, j, out.State[k], out.ZM[k])
				}
				continue
			}
			want := f(pan.X(i)+off[0], pan.Y(j)+off[1])
			if math.Abs(out.ZM[k]-want) > 1e-15 {
				t.Fatalf("cell (%d, %d): z %.15g, want %.15g", i, j, out.ZM[k], want)
			}
			if out.State[k] == scan.Filled {
				filled++
			}
		}
	}
	// Pan cells whose hob position lies within 2 mm of (20, 0) mm in both x
	// and y draw on the filled hob cell: x + 7.3 mm ∈ (18, 22) mm and
	// y − 3.1 mm ∈ (−2, 2) mm: x ∈ {11..14} mm, y ∈ {2..5} mm: 16 cells.
	if filled != 16 {
		t.Errorf("%d filled cells, want 16", filled)
	}

	// Errors: footprint beyond the hob scan, and over a hole in it.
	if _, err := ResampleHob(hob, pan, [2]float64{45 * mmM, 0}); err == nil || !strings.Contains(err.Error(), "outside the hob scan") {
		t.Errorf("pan beyond the hob: err = %v", err)
	}
	holed := hob.Clone()
	holed.State[holed.Index(30, 30)] = scan.Outside
	holed.ZM[holed.Index(30, 30)] = math.NaN()
	if _, err := ResampleHob(holed, pan, [2]float64{}); err == nil || !strings.Contains(err.Error(), "does not cover") {
		t.Errorf("hole in the hob: err = %v", err)
	}
	if _, err := ResampleHob(nil, pan, [2]float64{}); err == nil {
		t.Error("nil hob: no error")
	}
	if _, err := ResampleHob(hob, pan, [2]float64{math.Inf(1), 0}); err == nil {
		t.Error("infinite offset: no error")
	}
	// Exactly on the hob grid's last row and column is inside.
	edge := testDisc(3, 60*mmM, 60*mmM, func(x, y float64) float64 { return 0 })
	if _, err := ResampleHob(hob, edge, [2]float64{}); err != nil {
		t.Errorf("pan cells on the hob grid's edge: %v", err)
	}
}

func BenchmarkRadialHob1000(b *testing.B) {
	like := testDisc(1000, 0.2*mmM, 100*mmM, func(x, y float64) float64 { return 0 })
	rM := []float64{0, 20 * mmM, 50 * mmM, 90 * mmM, 120 * mmM}
	zM := []float64{0.1 * mmM, 0.08 * mmM, 0.02 * mmM, 0, -0.05 * mmM}
	for b.Loop() {
		if _, err := RadialHob(like, rM, zM, [2]float64{}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkResampleHob1000(b *testing.B) {
	hob := scan.NewSurface(600, 600, 0.5*mmM, -150*mmM, -150*mmM)
	for k := range hob.ZM {
		hob.ZM[k], hob.State[k] = 0, scan.Measured
	}
	like := testDisc(1000, 0.2*mmM, 100*mmM, func(x, y float64) float64 { return 0 })
	for b.Loop() {
		if _, err := ResampleHob(hob, like, [2]float64{5 * mmM, 0}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkReadRadialProfile(b *testing.B) {
	var sb strings.Builder
	sb.WriteString("r_mm,z_mm\n")
	for i := 0; i < 1000; i++ {
		sb.WriteString(strconv.FormatFloat(float64(i)*0.1, 'f', 1, 64) + ",0.01\n")
	}
	in := sb.String()
	b.SetBytes(int64(len(in)))
	for b.Loop() {
		if _, _, err := ReadRadialProfile(strings.NewReader(in), "bench.csv"); err != nil {
			b.Fatal(err)
		}
	}
}
