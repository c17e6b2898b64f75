package history

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"sync"
	"testing"
	"time"
)

func row(path, part, sha string, loss float64) Row {
	return Row{Path: path, PartNumber: part, Lot: "L1", Status: "ok", Quality: "ok", InputSHA256: sha, JobSHA256: "job1",
		Figures: map[string]float64{"loss_pct": loss, "concavity_mm": 0.1}}
}

func TestAppendKeysOnPathInputJob(t *testing.T) {
	ctx := context.Background()
	db := filepath.Join(t.TempDir(), "h.sqlite")
	s, err := Open(ctx, db)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	t0 := time.Date(2026, 12, 1, 22, 0, 0, 0, time.UTC)
	night1 := []Row{row("a.stl", "PN-1", "sha-a1", 3), row("b.stl", "PN-1", "sha-b1", 4)}
	// Night 2: a.stl unchanged (skipped, current), b.stl rescanned.
	night2 := []Row{row("a.stl", "PN-1", "sha-a1", 3), row("b.stl", "PN-1", "sha-b2", 5)}
	// Night 3: same as night 2 (a re-run) but b under another job.
	changedJob := row("b.stl", "PN-1", "sha-b2", 6)
	changedJob.JobSHA256 = "job2"
	for i, tc := range []struct {
		rows      []Row
		wantAdded int
	}{{night1, 2}, {night2, 1}, {night2, 0}, {[]Row{changedJob}, 1}} {
		_, added, err := s.Append(ctx, Run{Started: t0.Add(time.Duration(i) * 24 * time.Hour), SummarySHA256: "x", OutputDir: "out"}, tc.rows)
		if err != nil {
			t.Fatal(err)
		}
		if added != tc.wantAdded {
			t.Errorf("run %d: added %d rows, want %d", i+1, added, tc.wantAdded)
		}
	}
	runs, rows, err := s.Counts(ctx)
	if err != nil || runs != 4 || rows != 4 {
		t.Fatalf("counts: %d runs %d rows (%v), want 4 and 4", runs, rows, err)
	}
	pts, err := s.Series(ctx, "PN-1", "loss_pct")
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{3, 4, 5, 6}
	if len(pts) != len(want) {
		t.Fatalf("series has %d points, want %d", len(pts), len(want))
	}
	for i, p := range pts {
		if p.Value != want[i] {
			t.Errorf("point %d = %v, want %v", i, p.Value, want[i])
		}
	}
	// Order within one second: a start 0.5 s later sorts after (a text
	// column of variable-width times would put "00.5Z" before "00Z").
	if _, _, err := s.Append(ctx, Run{Started: t0.Add(-500 * time.Millisecond)}, []Row{row("c.stl", "PN-1", "sha-c", 1)}); err != nil {
		t.Fatal(err)
	}
	if _, _, err := s.Append(ctx, Run{Started: t0.Add(-time.Second)}, []Row{row("d.stl", "PN-1", "sha-d", 2)}); err != nil {
		t.Fatal(err)
	}
	if pts, _ = s.Series(ctx, "PN-1", "loss_pct"); len(pts) != 6 || pts[0].Value != 2 || pts[1].Value != 1 || pts[2].Value != 3 {
		t.Errorf("series after two earlier runs: %+v, want 2, 1, 3, ...", pts)
	}
	if !pts[4].Started.Equal(t0.Add(24 * time.Hour)) {
		t.Errorf("point 3 started %v, want night 2", pts[2].Started)
	}
}

func TestAppendRejectsBadRows(t *testing.T) {
	s, err := Open(context.Background(), filepath.Join(t.TempDir(), "h.sqlite"))
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	nan := row("a.stl", "P", "s", 0)
	nan.Figures["loss_pct"] = nan.Figures["loss_pct"] / 0 * 0
	unknown := row("a.stl", "P", "s", 1)
	unknown.Figures["loss_W"] = 1
	for name, r := range map[string]Row{"no sha": row("a.stl", "P", "", 1), "NaN": nan, "unknown figure": unknown} {
		if _, _, err := s.Append(context.Background(), Run{}, []Row{r}); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
	if runs, _, _ := s.Counts(context.Background()); runs != 0 {
		t.Errorf("a refused append recorded %d runs", runs)
	}
}

// Two writers on one file at once (as two batches sharing --history): every
// row of both lands, none twice, and neither fails.
func TestConcurrentWriters(t *testing.T) {
	ctx := context.Background()
	db := filepath.Join(t.TempDir(), "h.sqlite")
	const writers, batches, perBatch = 2, 10, 20
	var wg sync.WaitGroup
	errs := make(chan error, writers)
	for w := range writers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s, err := Open(ctx, db) // both may create the schema at once
			if err != nil {
				errs <- err
				return
			}
			defer s.Close()
			for b := range batches {
				var rows []Row
				for k := range perBatch {
					rows = append(rows, row(fmt.Sprintf("w%d/b%d/s%d.stl", w, b, k), "PN", fmt.Sprint(w, b, k), float64(k)))
				}
				if _, _, err := s.Append(ctx, Run{Started: time.Unix(int64(b), 0)}, rows); err != nil {
					errs <- err
					return
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Fatal(err)
	}
	s, err := OpenExisting(ctx, db)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	runs, rows, err := s.Counts(ctx)
	if err != nil || runs != writers*batches || rows != writers*batches*perBatch {
		t.Fatalf("%d runs, %d rows (%v); want %d and %d", runs, rows, err, writers*batches, writers*batches*perBatch)
	}
}

func TestOpenBadInputs(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	newer := filepath.Join(dir, "newer.sqlite")
	s, err := Open(ctx, newer)
	if err != nil {
		t.Fatal(err)
	}
	s.db.Exec("PRAGMA user_version = 99")
	s.Close()
	foreign := filepath.Join(dir, "foreign.sqlite")
	db, err := sql.Open("sqlite", foreign)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec("CREATE TABLE t(x)"); err != nil {
		t.Fatal(err)
	}
	db.Close()
	text := filepath.Join(dir, "notes.txt")
	os.WriteFile(text, []byte("this is not a database, it is text long enough to be read as a header ....................................."), 0o644)
	for _, tc := range []struct {
		name, path string
		existing   bool
		want       error // nil: any error
	}{
		{"missing", filepath.Join(dir, "none.sqlite"), true, ErrNotFound},
		{"newer schema, read", newer, true, ErrNewerSchema},
		{"newer schema, write", newer, false, ErrNewerSchema},
		{"foreign database, read", foreign, true, ErrNotHistory},
		{"foreign database, write", foreign, false, ErrNotHistory},
		{"text file", text, true, nil},
		{"empty path", "", false, nil},
		{"question mark", filepath.Join(dir, "a?b"), false, nil},
	} {
		var err error
		if tc.existing {
			_, err = OpenExisting(ctx, tc.path)
		} else {
			_, err = Open(ctx, tc.path)
		}
		if err == nil || tc.want != nil && !errors.Is(err, tc.want) {
			t.Errorf("%s: error %v, want %v", tc.name, err, tc.want)
		}
	}
	// The foreign database is left as it was.
	db, _ = sql.Open("sqlite", foreign)
	defer db.Close()
	var n int
	db.QueryRow("SELECT count(*) FROM sqlite_schema").Scan(&n)
	if n != 1 {
		t.Errorf("foreign database has %d schema entries after refusal, want 1", n)
	}
}

func TestSeriesBadQuery(t *testing.T) {
	s, err := Open(context.Background(), filepath.Join(t.TempDir(), "h.sqlite"))
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if _, err := s.Series(context.Background(), "", "loss_pct"); err == nil {
		t.Error("empty part: no error")
	}
	if _, err := s.Series(context.Background(), "P", "loss_pct; DROP TABLE runs"); !errors.Is(err, ErrUnknownFigure) {
		t.Errorf("bad figure: %v", err)
	}
}

// Two processes (this test binary run twice as writers) append to one file
// at once, as two batches on one machine sharing --history.
func TestConcurrentProcesses(t *testing.T) {
	if db := os.Getenv("GAPFLUX_HISTORY_WRITER"); db != "" {
		writer(t, db, os.Getenv("GAPFLUX_HISTORY_NAME"))
		return
	}
	db := filepath.Join(t.TempDir(), "h.sqlite")
	var cmds []*exec.Cmd
	for _, name := range []string{"p1", "p2"} {
		cmd := exec.Command(os.Args[0], "-test.run=^TestConcurrentProcesses$")
		cmd.Env = append(os.Environ(), "GAPFLUX_HISTORY_WRITER="+db, "GAPFLUX_HISTORY_NAME="+name)
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		cmds = append(cmds, cmd)
	}
	for _, cmd := range cmds {
		if err := cmd.Wait(); err != nil {
			t.Fatalf("writer process: %v", err)
		}
	}
	s, err := OpenExisting(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if runs, rows, err := s.Counts(context.Background()); err != nil || runs != 20 || rows != 200 {
		t.Fatalf("%d runs, %d rows (%v); want 20 and 200", runs, rows, err)
	}
}

func writer(t *testing.T, db, name string) {
	ctx := context.Background()
	s, err := Open(ctx, db)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	for b := range 10 {
		var rows []Row
		for k := range 10 {
			rows = append(rows, row(fmt.Sprintf("%s/%d/%d.stl", name, b, k), "PN", fmt.Sprint(name, b, k), 1))
		}
		if _, _, err := s.Append(ctx, Run{Started: time.Unix(int64(b), 0)}, rows); err != nil {
			t.Fatal(err)
		}
	}
}
