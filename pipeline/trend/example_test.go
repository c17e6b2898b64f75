package trend_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"gapflux/pipeline/history"
	"gapflux/pipeline/trend"
)

// Load gives a page (the batch's index.html) everything a trend section
// needs: per part number the points, the limits, the rules broken, and the
// chart as inline SVG.
func ExampleLoad() {
	dir, _ := os.MkdirTemp("", "trend-example")
	defer os.RemoveAll(dir)
	db := filepath.Join(dir, "history.sqlite")
	st, _ := history.Open(context.Background(), db)
	for night, loss := range []float64{8.1, 8.3, 8.0, 8.2, 8.1, 8.2, 12.5} {
		row := history.Row{Path: "pan.stl", PartNumber: "SP-180", Status: "ok", InputSHA256: fmt.Sprint(night), JobSHA256: "job",
			Figures: map[string]float64{"loss_pct": loss}}
		st.Append(context.Background(), history.Run{Started: time.Date(2026, 11, 1+night, 22, 0, 0, 0, time.UTC)}, []history.Row{row})
	}
	st.Close()

	// Baseline of 6: mean 8.150, moving ranges 0.2, 0.3, 0.2, 0.1, 0.1 (mean
	// 0.18), σ̂ = 0.18/1.128 = 0.1596, limits 8.150 ± 0.479.
	charts, err := trend.Load(context.Background(), trend.Options{History: db, Baseline: 6})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, pc := range charts {
		c := pc.Chart
		fmt.Printf("%s: %d points, centre %.3f, limits %.3f to %.3f\n", pc.Part, len(pc.Points), c.Centre, c.LCL, c.UCL)
		for i, rules := range c.Signals {
			if len(rules) > 0 {
				fmt.Printf("point %d (%s): %v\n", i+1, pc.Points[i].Started.Format("2006-01-02"), rules)
			}
		}
		svg, _ := pc.SVG()
		fmt.Println(len(svg) > 0)
	}
	// Output:
	// SP-180: 7 points, centre 8.150, limits 7.671 to 8.629
	// point 7 (2026-11-07): [WE1]
	// true
}
