package pipeline

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"gapflux/pipeline/history"
)

// HistoryFile is the history database a batch writes into its output
// folder unless BatchOptions.History names another.
const HistoryFile = "history.sqlite"

// HistoryOff as BatchOptions.History records no history (a database file
// named "off" is given as ./off).
const HistoryOff = "off"

// historyPath is the database a batch records into.
func historyPath(opt BatchOptions, out string) string {
	if opt.History != "" {
		return opt.History
	}
	return filepath.Join(out, HistoryFile)
}

// recordHistory appends the batch's rows to its history database in one
// transaction (history.Store.Append), after the summary is written. Rows
// with a result (ok, out of tolerance, rejected, or a failure recorded in
// error.json) are stored with the hashes their report.json or error.json
// carries; not-run rows and failures without hashes (job file errors,
// faults of the machine) have no result to keep. Writing goes on after an
// interrupt: the rows finished are results. It returns the run's id in the
// database, the rows added and those skipped for want of hashes.
func recordHistory(ctx context.Context, opt BatchOptions, out string, s *Summary, started time.Time) (runID int64, added, unkeyed int, err error) {
	var buf bytes.Buffer
	if err := s.WriteJSON(&buf); err != nil {
		return 0, 0, 0, err
	}
	sum := sha256.Sum256(buf.Bytes())
	var rows []history.Row
	for _, r := range s.Rows {
		if r.Status == StatusNotRun {
			continue
		}
		sha, jobSHA := resultHashes(out, r)
		if sha == "" || jobSHA == "" {
			unkeyed++
			continue
		}
		rows = append(rows, history.Row{Path: r.Path, PartNumber: r.PartNumber, Lot: r.Lot, Status: r.Status, Quality: r.Quality,
			InputSHA256: sha, JobSHA256: jobSHA, Figures: rowFigures(r)})
	}
	ctx = context.WithoutCancel(ctx)
	st, err := history.Open(ctx, historyPath(opt, out))
	if err != nil {
		return 0, 0, unkeyed, err
	}
	defer st.Close()
	runID, added, err = st.Append(ctx, history.Run{Started: started, SummarySHA256: hex.EncodeToString(sum[:]), OutputDir: out}, rows)
	return runID, added, unkeyed, err
}

// resultHashes reads the scan and job hashes of a row's result from its
// report.json, or error.json for a failed row; "" when there is none.
func resultHashes(out string, r SummaryRow) (sha, jobSHA string) {
	dir := ScanOutDir(out, r.Path)
	if r.Status == StatusFailed {
		var rec ErrorRecord
		if b, err := os.ReadFile(filepath.Join(dir, "error.json")); err == nil && json.Unmarshal(b, &rec) == nil {
			return rec.SHA256, rec.JobSHA256
		}
		return "", ""
	}
	var rep struct {
		Input ReportInput `json:"input"`
	}
	if b, err := os.ReadFile(filepath.Join(dir, "report.json")); err == nil && json.Unmarshal(b, &rep) == nil {
		return rep.Input.Pan.SHA256, rep.Input.JobSHA256
	}
	return "", ""
}

// rowFigures maps a row's figures to the history's column names (the
// summary's JSON keys); figures the row lacks are left out.
func rowFigures(r SummaryRow) map[string]float64 {
	all := map[string]*float64{
		"diameter_mm": r.DiameterMM, "flatness_mz_mm": r.FlatnessMZMM, "flatness_ls_mm": r.FlatnessLSMM,
		"concavity_mm": r.ConcavityMM, "concavity_pct_of_diameter": r.ConcavityPctOfDiameter,
		"noise_um": r.NoiseUM, "coverage_pct": r.CoveragePct, "tilt_deg": r.TiltDeg, "rock_mm": r.RockMM,
		"contact_area_pct": r.ContactAreaPct, "mean_gap_mm": r.MeanGapMM, "max_gap_mm": r.MaxGapMM,
		"power_w": r.PowerW, "flat_power_w": r.FlatPowerW, "loss_pct": r.LossPct, "glass_max_c": r.GlassMaxC,
		"time_s": r.TimeS, "flat_time_s": r.FlatTimeS, "extra_time_pct": r.ExtraTimePct, "extra_energy_kj": r.ExtraEnergyKJ,
	}
	m := make(map[string]float64, len(all))
	for k, v := range all {
		if v != nil && !isNaNOrInf(*v) {
			m[k] = *v
		}
	}
	return m
}

func isNaNOrInf(v float64) bool { return v != v || v > 1.7e308 || v < -1.7e308 }

// logHistory runs recordHistory and logs its outcome, and returns what the
// batch's index.html charts: the database with tonight's rows in it. A
// history that cannot be written never costs the batch its results: the
// error is logged and kept in the result (BatchResult.HistoryErr), the exit
// code is the batch's, the index says in one line that there is no chart,
// and running the same batch again records the rows then (rows already
// stored are not added twice).
func logHistory(ctx context.Context, opt BatchOptions, out string, res *BatchResult, started time.Time, log *runLog) IndexTrend {
	if opt.History == HistoryOff {
		log.printf("history: off, nothing recorded")
		return IndexTrend{Note: "No trend chart: the batch ran with --history off, so it recorded no history."}
	}
	db := historyPath(opt, out)
	runID, added, unkeyed, err := recordHistory(ctx, opt, out, res.Summary, started)
	if err != nil {
		res.HistoryErr = fmt.Errorf("recording the batch in the history database %s: %w; the batch's results are kept: run the same command again to record them",
			db, err)
		log.printf("%v", res.HistoryErr)
		return IndexTrend{Note: "No trend chart: this batch's rows could not be added to the history database " + db + " (run.log says why); run the same command again to record them."}
	}
	log.printf("history %s: %d new rows (%d rows without a recorded result not kept)", db, added, unkeyed)
	return IndexTrend{History: db, RunID: runID}
}
