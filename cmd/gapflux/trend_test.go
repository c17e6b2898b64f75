package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"gapflux/pipeline/history"
)

func TestTrendCommand(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	db := filepath.Join(dir, "h.sqlite")
	st, err := history.Open(ctx, db)
	if err != nil {
		t.Fatal(err)
	}
	for k := range 12 {
		v := 10 + float64(k%2) // stable, then a jump on the last night
		if k == 11 {
			v = 30
		}
		r := history.Row{Path: "pan.stl", PartNumber: "PN-1", Status: "ok", InputSHA256: fmt.Sprint(k), JobSHA256: "j",
			Figures: map[string]float64{"loss_pct": v}}
		if _, _, err := st.Append(ctx, history.Run{Started: time.Unix(int64(k)*86400, 0)}, []history.Row{r}); err != nil {
			t.Fatal(err)
		}
	}
	st.Close()
	out := filepath.Join(dir, "trend")
	for _, tc := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"trend", "--history", db, "--out", out, "--baseline", "10"}, exitFail, "PN-1: 12 points of loss_pct, limits from the first 10, 1 out of control"},
		{[]string{"trend", "--history", filepath.Join(dir, "none.sqlite"), "--out", out}, exitUsage, "no such history database"},
		{[]string{"trend", "--history", db, "--part", "", "--out", out}, exitUsage, "empty part number"},
		{[]string{"trend", "--history", db, "--figure", "loss", "--out", out}, exitUsage, "unknown figure"},
		{[]string{"trend", "--history", db}, exitUsage, "want --history and --out"},
	} {
		code, o, e := gapflux(t, tc.args...)
		if code != tc.code || !strings.Contains(o+e, tc.want) {
			t.Errorf("%v: exit %d, want %d; output %q, want %q", tc.args, code, tc.code, o+e, tc.want)
		}
	}
	if _, err := os.Stat(filepath.Join(out, "trend-PN-1-loss_pct.png")); err != nil {
		t.Error(err)
	}
}
