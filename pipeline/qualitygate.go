package pipeline

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/pipeline/quality"
	"gapflux/scan"
)

// QualityJob holds the data-quality gate's limits (DESIGN 5.0; issue 8).
// Every default is our own choice; JobDoc gives each one's reason.
type QualityJob struct {
	DiameterWarnMinMM      float64 `toml:"diameter_warn_min_mm"`
	DiameterWarnMaxMM      float64 `toml:"diameter_warn_max_mm"`
	DiameterRejectMinMM    float64 `toml:"diameter_reject_min_mm"`
	DiameterRejectMaxMM    float64 `toml:"diameter_reject_max_mm"`
	CoverageWarnMinPct     float64 `toml:"coverage_warn_min_pct"`
	CoverageRejectMinPct   float64 `toml:"coverage_reject_min_pct"`
	HoleWarnMaxPct         float64 `toml:"hole_warn_max_pct"` // of the base diameter
	HoleRejectMaxPct       float64 `toml:"hole_reject_max_pct"`
	RimGapWarnMaxDeg       float64 `toml:"rim_gap_warn_max_deg"`
	RimMissingRejectMaxPct float64 `toml:"rim_missing_reject_max_pct"`
	DroppedWarnMaxPct      float64 `toml:"dropped_warn_max_pct"`
	DroppedRejectMaxPct    float64 `toml:"dropped_reject_max_pct"`
	FootprintWarnMinPct    float64 `toml:"footprint_warn_min_pct"`
	FootprintBandMM        float64 `toml:"footprint_band_mm"` // points this near the base plane make the footprint
	NoiseGapWarnMaxPct     float64 `toml:"noise_gap_warn_max_pct"`
}

// defaultQualityJob returns the gate's default limits (ours).
func defaultQualityJob() QualityJob {
	l := quality.DefaultLimits()
	return QualityJob{
		DiameterWarnMinMM: l.DiameterWarnMinM * 1e3, DiameterWarnMaxMM: l.DiameterWarnMaxM * 1e3,
		DiameterRejectMinMM: l.DiameterRejectMinM * 1e3, DiameterRejectMaxMM: l.DiameterRejectMaxM * 1e3,
		CoverageWarnMinPct: l.CoverageWarnMinPct, CoverageRejectMinPct: l.CoverageRejectMinPct,
		HoleWarnMaxPct: l.HoleWarnMaxPct, HoleRejectMaxPct: l.HoleRejectMaxPct,
		RimGapWarnMaxDeg: l.RimGapWarnMaxDeg, RimMissingRejectMaxPct: l.RimMissingRejectMaxPct,
		DroppedWarnMaxPct: l.DroppedWarnMaxPct, DroppedRejectMaxPct: l.DroppedRejectMaxPct,
		FootprintWarnMinPct: l.FootprintWarnMinPct, FootprintBandMM: 15,
		NoiseGapWarnMaxPct: l.NoiseGapWarnMaxPct,
	}
}

// limits converts the job's limits to the gate's (SI).
func (q QualityJob) limits() quality.Limits {
	return quality.Limits{
		DiameterWarnMinM: q.DiameterWarnMinMM / 1e3, DiameterWarnMaxM: q.DiameterWarnMaxMM / 1e3,
		DiameterRejectMinM: q.DiameterRejectMinMM / 1e3, DiameterRejectMaxM: q.DiameterRejectMaxMM / 1e3,
		CoverageWarnMinPct: q.CoverageWarnMinPct, CoverageRejectMinPct: q.CoverageRejectMinPct,
		HoleWarnMaxPct: q.HoleWarnMaxPct, HoleRejectMaxPct: q.HoleRejectMaxPct,
		RimGapWarnMaxDeg: q.RimGapWarnMaxDeg, RimMissingRejectMaxPct: q.RimMissingRejectMaxPct,
		DroppedWarnMaxPct: q.DroppedWarnMaxPct, DroppedRejectMaxPct: q.DroppedRejectMaxPct,
		FootprintWarnMinPct: q.FootprintWarnMinPct, NoiseGapWarnMaxPct: q.NoiseGapWarnMaxPct,
	}
}

// validate checks the [quality] keys; the message names the table.
func (q QualityJob) validate() error {
	if err := q.limits().Validate(); err != nil {
		return fmt.Errorf("quality: %w", err)
	}
	if !(q.FootprintBandMM > 0) || math.IsInf(q.FootprintBandMM, 0) {
		return fmt.Errorf("quality.footprint_band_mm must be > 0 (got %g)", q.FootprintBandMM)
	}
	return nil
}

// gate gathers the data-quality figures as the chain measures them and
// judges them (package quality).
type gate struct {
	in     quality.Input
	limits quality.Limits
}

func newGate(job Job, unit string) *gate {
	in := quality.Unmeasured()
	in.Unit = unit
	return &gate{in: in, limits: job.Quality.limits()}
}

// levelled takes the figures known once the base is found: its diameter,
// how the face was decided, and the footprint of sample (the scan's points
// sampled before levelling) within bandM of the base plane.
func (g *gate) levelled(lev *scan.Levelled, sample []r3.Vec, bandM float64) {
	g.in.DiameterM, g.in.FaceSource = 2*lev.RadiusM, lev.FaceSource
	g.in.FootprintDiameterM = footprintDiameterM(sample, lev, bandM)
	// Base-like points cut off by segmentation (at the base's height but
	// beyond the rim circle: a flange, or a lifted edge taken for a
	// corner), against the base's points; the corner and wall, which rise
	// out of the base's height band, and strays do not count.
	if kept := len(lev.Cloud.Points); kept > 0 {
		g.in.PointsDroppedPct = 100 * float64(lev.DroppedAtBaseHeight) / float64(kept+lev.DroppedAtBaseHeight)
		g.in.PointsDroppedWhere = lev.DropReason
	}
}

// gridded takes the figures known once the base is gridded and filtered:
// coverage and the largest hole as the gridding measured them from the
// points (scan.Gridded: within 1.5 point spacings of a measured point;
// largest empty circle), the rim gaps from the gridding's rim sectors (rimCover),
// and the noise the form filter removed.
func (g *gate) gridded(grid *scan.Gridded, lev *scan.Levelled, filt *scan.FilterResult) {
	g.in.CoveragePct, g.in.LargestHoleM = grid.CoveragePct, grid.LargestHoleM
	g.in.RimLargestGapDeg, g.in.RimMissingPct = rimCover(grid.RimSectorsMissing)
	g.in.NoiseM = filt.NoiseM
}

// judge evaluates the gate on the figures measured so far and puts the
// outcome in rep.Quality. When the scan is rejected, or final is set (the
// last call), each warning and rejection is added to rep.Warnings. It
// returns true when the scan is rejected.
func (g *gate) judge(rep *Report, final bool) bool {
	r := quality.Evaluate(g.in, g.limits)
	rep.Quality = qualityReport(r)
	rejected := r.Status == quality.Reject
	if rejected || final {
		for _, c := range r.Checks {
			// scan.Level warns of an assumed face itself.
			if (c.Status == quality.Warn || c.Status == quality.Reject) && c.Name != quality.Face {
				rep.Warnings = append(rep.Warnings, "quality: "+c.Message)
			}
		}
	}
	return rejected
}

// footprintSamplePoints bounds the points kept to measure the footprint.
const footprintSamplePoints = 20000

// sampleFootprint copies every k-th point of a scan (at most
// footprintSamplePoints of them), so that the footprint can be measured
// after scan.Level has reused the cloud's storage.
func sampleFootprint(pts []r3.Vec) []r3.Vec {
	stride := max(1, (len(pts)+footprintSamplePoints-1)/footprintSamplePoints)
	out := make([]r3.Vec, 0, len(pts)/stride+1)
	for i := 0; i < len(pts); i += stride {
		out = append(out, pts[i])
	}
	return out
}

// footprintDiameterM is the diameter of the scan's footprint, m: twice the
// 99th percentile of the distance from the base axis of the sampled points
// within bandM of the base plane (in lev's base frame), so that a few stray
// points do not widen it while a wall's foot, a corner or a lifted outer
// ring cut off by segmentation does. NaN when no point lies in the band.
func footprintDiameterM(sample []r3.Vec, lev *scan.Levelled, bandM float64) float64 {
	rot, o := lev.Rotation, lev.OriginM
	row := func(i int) r3.Vec { return r3.Vec{X: rot[i][0], Y: rot[i][1], Z: rot[i][2]} }
	ex, ey, ez := row(0), row(1), row(2)
	var rs []float64
	for _, p := range sample {
		d := r3.Sub(p, o)
		if math.Abs(r3.Dot(d, ez)) <= bandM {
			rs = append(rs, math.Hypot(r3.Dot(d, ex), r3.Dot(d, ey)))
		}
	}
	if len(rs) == 0 {
		return math.NaN()
	}
	sort.Float64s(rs)
	return 2 * rs[int(math.Floor(0.99*float64(len(rs)-1)))]
}

// qualityReport turns the gate's outcome into the report section, figures
// rounded to 4 significant digits.
func qualityReport(r quality.Result) *QualityReport {
	opt := func(v float64) *float64 {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil
		}
		v = roundSig(v, 4)
		return &v
	}
	q := &QualityReport{Status: r.Status, Checks: make([]QualityCheck, 0, len(r.Checks))}
	for _, c := range r.Checks {
		q.Checks = append(q.Checks, QualityCheck{Name: c.Name, Status: c.Status, Figure: opt(c.Figure), Detail: c.Detail,
			WarnBelow: opt(c.WarnBelow), WarnAbove: opt(c.WarnAbove), RejectBelow: opt(c.RejectBelow), RejectAbove: opt(c.RejectAbove),
			Message: c.Message})
	}
	return q
}

// first returns the message of the first check whose status is the
// section's status, "" when the scan passed the gate.
func (q *QualityReport) first() string {
	if q.Status == quality.OK {
		return ""
	}
	for _, c := range q.Checks {
		if c.Status == q.Status {
			return c.Message
		}
	}
	return ""
}

// count returns how many checks have the given status.
func (q *QualityReport) count(status string) int {
	n := 0
	for _, c := range q.Checks {
		if c.Status == status {
			n++
		}
	}
	return n
}

// qualityLine is the quality line of the printed summary.
func qualityLine(q *QualityReport) string {
	switch q.Status {
	case quality.OK:
		return fmt.Sprintf("quality: ok (%d checks passed, %d not measured)", q.count(quality.OK), q.count(quality.NotMeasured))
	case quality.Reject:
		return fmt.Sprintf("quality: REJECTED, not analysed further: %s (%s reject, %d warn)",
			q.first(), counted(q.count(quality.Reject), "check", "checks"), q.count(quality.Warn))
	}
	return fmt.Sprintf("quality: warn: %s (%s)", q.first(), counted(q.count(quality.Warn), "check warns", "checks warn"))
}

// Rejected reports whether the data-quality gate rejected the scan, which
// then has no pose, heat or verdict.
func (r *Report) Rejected() bool { return r.Quality != nil && r.Quality.Status == quality.Reject }
