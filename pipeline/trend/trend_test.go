package trend

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"gapflux/pipeline/history"
)

// makeHistory stores n nights of one scan of part for each given part,
// loss_pct = 10 + k%3 (a stable pattern), then a jump to 20 on the last night.
func makeHistory(t *testing.T, n int, parts ...string) string {
	t.Helper()
	ctx := context.Background()
	db := filepath.Join(t.TempDir(), "h.sqlite")
	st, err := history.Open(ctx, db)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	for k := range n {
		var rows []history.Row
		for _, p := range parts {
			v := 10 + float64(k%3)
			if k == n-1 {
				v = 20
			}
			rows = append(rows, history.Row{Path: p + "/pan.stl", PartNumber: p, Lot: "L", Status: "ok", Quality: "ok",
				InputSHA256: fmt.Sprint(p, k), JobSHA256: "j", Figures: map[string]float64{"loss_pct": v}})
		}
		if _, _, err := st.Append(ctx, history.Run{Started: time.Date(2026, 11, 1, 22, 0, 0, 0, time.UTC).AddDate(0, 0, k)}, rows); err != nil {
			t.Fatal(err)
		}
	}
	return db
}

func TestLoadAndWrite(t *testing.T) {
	db := makeHistory(t, 25, "PN/2", "PN-1")
	charts, err := Load(context.Background(), Options{History: db})
	if err != nil {
		t.Fatal(err)
	}
	if len(charts) != 2 || charts[0].Part != "PN-1" || charts[1].Part != "PN/2" {
		t.Fatalf("parts %v", charts)
	}
	c := charts[0].Chart
	// Baseline 20 of 10,11,12,10,...: mean 10.95; 19 moving ranges 1,1,2,1,1,2,...,1 sum to 25.
	if c.Baseline != 20 || abs(c.Centre-10.95) > 1e-12 || abs(c.MRCentre-25.0/19) > 1e-12 {
		t.Errorf("baseline %d centre %v MR̄ %v; want 20, 10.95, %v", c.Baseline, c.Centre, c.MRCentre, 25.0/19)
	}
	if charts[0].Signals() == 0 || len(c.Signals[24]) == 0 {
		t.Errorf("the jump to 20 on the last night is not flagged: %v", c.Signals)
	}
	out := t.TempDir()
	files, err := Write(out, charts, "loss_pct")
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != 5 {
		t.Errorf("files %v, want 2 PNG, 2 SVG, 1 CSV", files)
	}
	csvBytes, _ := os.ReadFile(filepath.Join(out, "trend-loss_pct.csv"))
	lines := strings.Split(strings.TrimSpace(string(csvBytes)), "\n")
	if len(lines) != 51 {
		t.Errorf("CSV has %d lines, want header + 50", len(lines))
	}
	if !strings.HasPrefix(lines[0], "part_number,point,run_id,run_started_utc,path,lot,status,loss_pct,moving_range_loss_pct,") {
		t.Errorf("header %q", lines[0])
	}
	if want := "PN-1,25,25,2026-11-25T22:00:00Z,PN-1/pan.stl,L,ok,20,"; !strings.HasPrefix(lines[25], want) || !strings.Contains(lines[25], "WE1") {
		t.Errorf("last point of PN-1: %q, want prefix %q and WE1", lines[25], want)
	}
	// Same database, same bytes.
	out2 := t.TempDir()
	Write(out2, charts, "loss_pct")
	for _, f := range files {
		a, _ := os.ReadFile(f)
		b, _ := os.ReadFile(filepath.Join(out2, filepath.Base(f)))
		if !bytes.Equal(a, b) {
			t.Errorf("%s differs between two writes", filepath.Base(f))
		}
	}
}

func TestLoadBadInputs(t *testing.T) {
	db := makeHistory(t, 3, "PN-1")
	newer := makeHistory(t, 1, "PN-1")
	st, _ := history.Open(context.Background(), newer)
	st.Close()
	setVersion(t, newer, 7)
	for _, tc := range []struct {
		name string
		opt  Options
		want error
	}{
		{"missing database", Options{History: filepath.Join(t.TempDir(), "none.sqlite")}, history.ErrNotFound},
		{"newer schema", Options{History: newer}, history.ErrNewerSchema},
		{"empty part", Options{History: db, Parts: []string{""}}, nil},
		{"unknown part", Options{History: db, Parts: []string{"PN-9"}}, nil},
		{"unknown figure", Options{History: db, Figure: "loss"}, history.ErrUnknownFigure},
		{"baseline 1", Options{History: db, Baseline: 1}, nil},
	} {
		_, err := Load(context.Background(), tc.opt)
		if err == nil || tc.want != nil && !errors.Is(err, tc.want) {
			t.Errorf("%s: error %v, want %v", tc.name, err, tc.want)
		}
	}
}

func TestFileBase(t *testing.T) {
	for part, want := range map[string]string{"PN-1": "trend-PN-1-loss_pct", "../x": "trend-.._x-"} {
		if got := FileBase(part, "loss_pct"); !strings.HasPrefix(got, want) || strings.ContainsAny(got, "/\\") {
			t.Errorf("FileBase(%q) = %q, want prefix %q and no separator", part, got, want)
		}
	}
	if FileBase("a/b", "f") == FileBase("a_b", "f") {
		t.Error("two parts share a file name")
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// TestLoadNonNegative checks that gapflux trend clips the lower limit at 0
// for a figure non-negative by definition and not for loss_pct, which can
// be below 0 (Montgomery 2013, §6.4 and §7: a computed LCL below zero of a
// non-negative quantity is set to zero). Both figures hold 0.02, 0.10,
// 0.02, ... over 20 nights: X̄ = 0.06, every moving range 0.08,
// σ̂ = 0.08/1.128 = 0.0709220, X̄ − 3σ̂ = −0.1527660 (to 1e-7).
func TestLoadNonNegative(t *testing.T) {
	ctx := context.Background()
	db := filepath.Join(t.TempDir(), "h.sqlite")
	st, err := history.Open(ctx, db)
	if err != nil {
		t.Fatal(err)
	}
	for k := range 20 {
		v := 0.02 + 0.08*float64(k%2)
		row := history.Row{Path: "p.stl", PartNumber: "PN", Status: "ok", Quality: "ok", InputSHA256: fmt.Sprint(k), JobSHA256: "j",
			Figures: map[string]float64{"flatness_mz_mm": v, "loss_pct": v}}
		if _, _, err := st.Append(ctx, history.Run{Started: time.Date(2026, 11, 1, 22, 0, 0, 0, time.UTC).AddDate(0, 0, k)}, []history.Row{row}); err != nil {
			t.Fatal(err)
		}
	}
	st.Close()
	for _, tc := range []struct {
		figure  string
		clipped bool
		lcl     float64
	}{{"flatness_mz_mm", true, 0}, {"loss_pct", false, -0.1527660}} {
		charts, err := Load(ctx, Options{History: db, Figure: tc.figure})
		if err != nil {
			t.Fatal(err)
		}
		c := charts[0].Chart
		if c.Clipped != tc.clipped || abs(c.LCL-tc.lcl) > 1e-7 || abs(c.LCLRaw+0.1527660) > 1e-7 {
			t.Errorf("%s: LCL %.7f (raw %.7f, clipped %v), want %.7f (raw -0.1527660, clipped %v)", tc.figure, c.LCL, c.LCLRaw, c.Clipped, tc.lcl, tc.clipped)
		}
		var b bytes.Buffer
		if err := WriteCSV(&b, charts, tc.figure); err != nil {
			t.Fatal(err)
		}
		if first := strings.Split(b.String(), "\n")[1]; !strings.HasSuffix(first, ",-0.15276596") {
			t.Errorf("%s: CSV row %q, want the unclipped LCL -0.15276596 last", tc.figure, first)
		}
	}
}
