package pipeline

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"gapflux/scan"
)

// MarshalReport encodes a report as indented JSON.
func MarshalReport(rep *Report) ([]byte, error) {
	b, err := json.MarshalIndent(rep, "", "  ")
	if err != nil {
		return nil, err
	}
	return append(b, '\n'), nil
}

// ringColumns are the columns of rings.csv: one row per ring, fixed
// decimals, no timestamps, so two scans' tables diff line by line.
var ringColumns = []string{"ring", "r_in_mm", "r_out_mm", "area_mm2", "contact_pct", "mean_gap_mm", "max_gap_mm",
	"h_w_m2k", "h_solid_w_m2k", "h_gas_w_m2k", "h_rad_w_m2k", "flux_kw_m2", "flat_flux_kw_m2",
	"power_w", "flat_power_w", "power_lost_w"}

// WriteRingsCSV writes the ring table.
func WriteRingsCSV(w io.Writer, rings []RingReport) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(ringColumns); err != nil {
		return err
	}
	f := num
	for i, r := range rings {
		rec := []string{strconv.Itoa(i + 1), f(r.RInMM, 2), f(r.ROutMM, 2), f(r.AreaMM2, 1), f(r.ContactPct, 2),
			f(r.MeanGapMM, 4), f(r.MaxGapMM, 4), f(r.HWM2K, 2), f(r.HSolidWM2K, 4), f(r.HGasWM2K, 2), f(r.HRadWM2K, 3),
			f(r.FluxKWM2, 3), f(r.FlatFluxKWM2, 3), f(r.PowerW, 3), f(r.FlatPowerW, 3), f(r.PowerLostW, 3)}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// WriteOutputs writes every output of one scan into dir: the maps and
// the ring chart followed by report.html (which embeds their SVG
// documents, kept as they are written), the ring table, the field file
// and the hot pictures, these at once (up to one per available
// processor), then report.json last, so that its presence means the rest
// is there. The error returned is the first in that order (ring table,
// fields, pictures, hot pictures, report.html, report.json), whatever the
// scheduling.
func WriteOutputs(res *Result, dir string) error {
	rep := res.Report
	var tasks []func() error
	if len(rep.Rings) > 0 {
		tasks = append(tasks, func() error {
			return WriteFileAtomic(filepath.Join(dir, "rings.csv"), func(w io.Writer) error {
				return WriteRingsCSV(w, rep.Rings)
			})
		})
	}
	// fields.vti first: it is the longest single write.
	tasks = append(tasks, func() error { return writeFields(dir, res) })
	var htmlErr error
	tasks = append(tasks, func() error {
		svgs := &svgDocs{}
		if err := runParallel(pictureTasks(dir, res, svgs)); err != nil {
			return err
		}
		htmlErr = writeReportHTML(dir, res, svgs.docs)
		return nil
	})
	tasks = append(tasks, func() error { return writeHotPictures(dir, res) })
	if err := runParallel(tasks); err != nil {
		return err
	}
	if htmlErr != nil {
		return htmlErr
	}
	b, err := MarshalReport(rep)
	if err != nil {
		return err
	}
	return WriteBytesAtomic(filepath.Join(dir, "report.json"), b)
}

// writeFields writes fields.vti as the job's outputs.fields says: zlib
// compressed (the default), plain, or not at all (then an old one is
// removed, so the folder never holds fields of an earlier run).
func writeFields(dir string, res *Result) error {
	path := filepath.Join(dir, "fields.vti")
	write := WriteVTICompressed
	switch res.Job.Outputs.Fields {
	case FieldsOff:
		if err := os.Remove(path); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return err
		}
		return nil
	case FieldsPlain:
		write = WriteVTI
	}
	if res.Form == nil {
		return nil
	}
	return WriteFileAtomic(path, func(w io.Writer) error {
		return write(w, res.vtiGrid(), res.vtiFields())
	})
}

func (res *Result) vtiGrid() VTIGrid {
	s := res.Form
	return VTIGrid{Nx: s.Nx, Ny: s.Ny, X0MM: s.X0M * 1e3, Y0MM: s.Y0M * 1e3, SpacingMM: s.CellM * 1e3}
}

// vtiFields lists the per-cell fields, in display units. Each is
// computed cell by cell as fields.vti is written (VTIField.at), a block
// at a time, rather than held whole: thirteen 2.2 MB arrays for a 2
// M-point scan's 523 × 523 grid.
func (res *Result) vtiFields() []VTIField {
	s := res.Form
	// scaled is src through f in the base cells where it is defined, NaN
	// elsewhere (and everywhere without src).
	scaled := func(src []float64, f func(float64) float64) func(int) float64 {
		return func(k int) float64 {
			if src == nil || !s.InBase(k) || math.IsNaN(src[k]) {
				return math.NaN()
			}
			return f(src[k])
		}
	}
	fields := []VTIField{
		{Name: "height_um", at: scaled(s.ZM, func(v float64) float64 { return v * 1e6 })},
		{Name: "cell_state", at: func(k int) float64 { return float64(s.State[k]) }, UInt8: true},
	}
	if r := res.Raw; r != nil && r.CellM == s.CellM {
		fields = append(fields, VTIField{Name: "height_raw_um", at: rawHeightUM(s, r)})
	}
	if res.GapM != nil {
		contact := res.Contact
		fields = append(fields,
			VTIField{Name: "gap_mm", at: scaled(res.GapM, func(v float64) float64 { return v * 1e3 })},
			VTIField{Name: "contact", at: func(k int) float64 { return boolValue(k < len(contact) && contact[k]) }, UInt8: true})
	}
	if res.Scan != nil {
		fields = append(fields, res.heatFields(scaled)...)
	}
	return append(fields, res.hotFields()...)
}

// boolValue is 1 for true, 0 for false.
func boolValue(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// rawHeightUM returns the raw grid r's height (µm) at each cell of the
// form grid s (the raw grid sits inside the possibly padded form grid on
// the same lattice), NaN where r has no cell or its cell is outside.
func rawHeightUM(s, r *scan.Surface) func(int) float64 {
	i0 := int(math.Round((r.X0M - s.X0M) / s.CellM))
	j0 := int(math.Round((r.Y0M - s.Y0M) / s.CellM))
	return func(k int) float64 {
		i, j := k%s.Nx-i0, k/s.Nx-j0
		if i < 0 || i >= r.Nx || j < 0 || j >= r.Ny || r.State[r.Index(i, j)] == scan.Outside {
			return math.NaN()
		}
		return r.ZM[r.Index(i, j)] * 1e6
	}
}

// heatFields are the solved scan's per-cell fields: conductances (W/m²K),
// base temperature (°C), fluxes (kW/m²) and, in heater mode, the glass
// temperature (°C); scaled makes a base field of a cell array.
func (res *Result) heatFields(scaled func([]float64, func(float64) float64) func(int) float64) []VTIField {
	sol := res.Scan
	id := func(v float64) float64 { return v }
	toC := func(v float64) float64 { return v - kelvin }
	kw := func(v float64) float64 { return v / 1e3 }
	total := func(k int) float64 {
		if !res.Form.InBase(k) {
			return math.NaN()
		}
		v := sol.SolidWM2K[k] + sol.GasWM2K[k] + sol.RadWM2K[k]
		if math.IsNaN(v) {
			return math.NaN()
		}
		return v
	}
	fields := []VTIField{
		{Name: "h_w_m2k", at: total},
		{Name: "h_solid_w_m2k", at: scaled(sol.SolidWM2K, id)},
		{Name: "h_gas_w_m2k", at: scaled(sol.GasWM2K, id)},
		{Name: "h_rad_w_m2k", at: scaled(sol.RadWM2K, id)},
		{Name: "base_c", at: scaled(sol.TPanK, toC)},
		{Name: "flux_kw_m2", at: scaled(sol.FluxWM2, kw)},
	}
	if res.Flat != nil {
		fields = append(fields, VTIField{Name: "flat_flux_kw_m2", at: scaled(res.Flat.FluxWM2, kw)})
	}
	if g := sol.TGlassK; g != nil {
		fields = append(fields, VTIField{Name: "glass_c", at: func(k int) float64 {
			if k >= len(g) {
				return 0
			}
			return g[k] - kelvin
		}})
	}
	return fields
}

// bendAxis is the bend axis of a bent base, degrees (0 if not reported).
func bendAxis(g *GeometryReport) float64 {
	if g.ShapeQuadric == nil {
		return 0
	}
	return g.ShapeQuadric.BendAxisDeg
}

// HumanSummary is the short plain-words summary printed after analyze.
func HumanSummary(res *Result) string {
	rep := res.Report
	var b strings.Builder
	fmt.Fprintf(&b, "%s (%s, %s)\n", res.Name, rep.Input.Pan.Format, inputCounts(rep.Input.Pan))
	if q := rep.Quality; q != nil {
		fmt.Fprintf(&b, "  %s\n", qualityLine(q))
	}
	if g := rep.Geometry; g != nil {
		writeGeometrySummary(&b, g)
	}
	if p := rep.Pose; p != nil {
		rock := "stands firm"
		if p.TipForceN != nil {
			rock = fmt.Sprintf("stands firm (a rim press of %.1f N would tip it)", *p.TipForceN)
		}
		if p.Rocks {
			rock = "ROCKS: " + rockWords(p)
		}
		fmt.Fprintf(&b, "  on the hob: %s support %.0f mm wide (%d corners), tilt %.3f°, %s\n",
			p.Support, p.SupportWidthMM, len(p.ContactPointsMM), p.TiltDeg, rock)
	}
	if g := rep.Gap; g != nil {
		fmt.Fprintf(&b, "  gap: %.1f %% of the base in contact, mean gap %.3f mm, largest %.3f mm\n",
			g.ContactAreaPct, g.MeanGapMM, g.MaxGapMM)
	}
	if h := rep.Heat; h != nil {
		writeHeatSummary(&b, h)
	}
	if f := rep.Input.FittedToBase; f != nil {
		fmt.Fprintf(&b, "  fitted to the base (job keys left at 0): %s\n", fittedText(f))
	}
	if h := rep.Heatup; h != nil {
		fmt.Fprintf(&b, "  heat-up of %.2f kg water %.0f→%.0f °C: %.0f s against %.0f s flat (+%.1f %%), %.1f kJ more energy\n",
			h.WaterKg, h.FromC, h.ToC, h.TimeS, h.FlatTimeS, h.ExtraTimePct, h.ExtraEnergyKJ)
		if hh := rep.Heat; hh != nil && hh.GlassHeatKJ != nil {
			fmt.Fprintf(&b, "  (quasi-steady: the glass itself holds %.0f kJ when hot, %.0f kJ under the flat twin, not charged above)\n",
				*hh.GlassHeatKJ, *hh.FlatGlassHeatKJ)
		}
	}
	if h, g := rep.Hot, rep.Geometry; h != nil && g != nil {
		b.WriteString(hotSummary(h, g.DiameterMM))
	}
	b.WriteString(uncertaintyText(rep.Uncertainty))
	if v := rep.Verdict; v != nil {
		if v.Pass {
			fmt.Fprintf(&b, "  verdict: PASS\n")
		} else {
			fmt.Fprintf(&b, "  verdict: %s\n", strings.ToUpper(v.Result))
			for _, r := range v.Reasons {
				fmt.Fprintf(&b, "    - %s\n", r)
			}
		}
	}
	for _, w := range rep.Warnings {
		fmt.Fprintf(&b, "  warning: %s\n", w)
	}
	return b.String()
}

// writeGeometrySummary writes HumanSummary's lines on the base's form.
func writeGeometrySummary(b *strings.Builder, g *GeometryReport) {
	word := map[string]string{
		"dished": "concave (dished: centre raised, stands on its rim)",
		"domed":  "convex (domed: centre lower, stands on its centre)",
		"flat":   "flat within the noise of the form terms",
		"tilted": "flat but tilted (a wedge)",
		"saddle": "a saddle (twisted: up one way, down the other)",
		"bent":   fmt.Sprintf("bent about one axis (at %.0f° from x)", bendAxis(g)),
	}[g.Shape]
	fmt.Fprintf(b, "  base: diameter %.1f mm, minimum-zone flatness %.3f mm (least squares %.3f mm)\n",
		g.DiameterMM, g.FlatnessMZMM, g.FlatnessLSMM)
	fmt.Fprintf(b, "  concavity %s mm = %s %% of diameter: %s\n", signedFixed(g.ConcavityMM, 3), signedFixed(g.ConcavityPctOfDiameter, 3), word)
	fmt.Fprintf(b, "  measured %.1f %% of the base, %s removed, scanner noise %.1f µm (filter cut-off %.1f mm)\n",
		g.CoveragePct, counted(g.OutliersRemoved, "outlier", "outliers"), g.NoiseUM, g.CutoffMM)
}

// writeHeatSummary writes HumanSummary's lines on the heat into the pan.
func writeHeatSummary(b *strings.Builder, h *HeatReport) {
	fmt.Fprintf(b, "  heat (%s mode, water at %.0f °C): %.0f W into the pan against %.0f W for a flat twin: %.1f %% of the heating power lost\n",
		h.Mode, h.WaterC, h.PowerW, h.FlatPowerW, h.LossPct)
	solid := fmt.Sprintf("%.3f %%", h.SolidPct)
	if math.Abs(h.SolidPct) < 0.001 {
		solid = "below 0.001 %"
	}
	fmt.Fprintf(b, "  heat crossing the interface: gas %.1f %%, radiation %.1f %%, solid contact %s\n",
		h.GasPct, h.RadiationPct, solid)
	if h.GlassMaxC != nil {
		fmt.Fprintf(b, "  glass top up to %.0f °C (flat twin %.0f °C), heater duty %.0f %% (flat twin %.0f %%)\n",
			*h.GlassMaxC, *h.FlatGlassMaxC, *h.HeaterDutyPct, *h.FlatHeaterDutyPct)
	}
}

// signedFixed writes v with prec decimals and an explicit sign, except that
// a value that rounds to zero reads "0.000" (no "-0.000" beside "+0.000");
// num does the rounding.
func signedFixed(v float64, prec int) string {
	s := num(v, prec)
	if !strings.HasPrefix(s, "-") && !zeroDigits(s) {
		return "+" + s
	}
	return s
}
