// Package history keeps the results of every batch in one SQLite database
// (through the pure-Go driver modernc.org/sqlite), so that a part number's
// figures can be followed over weeks.
//
// # Schema and migrations
//
// The database is marked with PRAGMA application_id = ApplicationID and its
// schema version is PRAGMA user_version (SchemaVersion, now 1). Open creates
// the tables in a fresh file; a file of an older version is brought up to
// date by the steps of migrations, one version at a time, each in the
// transaction that also sets user_version, so a migration happens whole or
// not at all. A file of a newer version, or a SQLite file that is not a
// gapflux history, is refused and left untouched.
//
// Version 1:
//
//	runs(run_id INTEGER PRIMARY KEY, started_utc TEXT (UTC, fixed-width RFC 3339), summary_sha256 TEXT,
//	     output_dir TEXT, rows_added INTEGER)
//	measurements(run_id, path, part_number, lot, status, quality,
//	     input_sha256, job_sha256, <one REAL column per name in Figures>,
//	     PRIMARY KEY (path, input_sha256, job_sha256))
//
// # One point per measurement
//
// A row is keyed on (path, input_sha256, job_sha256): the scan's path in
// its batch folder, the SHA-256 of its bytes and the hash of its effective
// job. A batch run again over unchanged scans (their outputs current and
// skipped) adds no point; a changed scan, or the same scan under a changed
// job, adds one. The first run that recorded a row keeps it.
//
// # Concurrency
//
// Every write is one transaction begun with BEGIN IMMEDIATE (it takes the
// write lock at once, so two writers never deadlock upgrading a read lock),
// with a busy timeout of BusyTimeout and a few retries after that. The
// rollback journal is used rather than WAL, which needs shared memory and so
// does not work at all on a network file system; SQLite's locking on network
// file systems is itself unreliable, so keep the database on a local disk.
package history

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"slices"
	"strings"
	"time"

	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// SchemaVersion is the schema version this package writes and reads.
const SchemaVersion = 1

// ApplicationID marks a gapflux history database ("gfhs" in ASCII).
const ApplicationID = 0x67666873

// BusyTimeout is how long a statement waits for another writer's lock.
const BusyTimeout = 10 * time.Second

// timeLayout stores times in UTC with a fixed width, so that the text
// sorts in time order (RFC 3339 with nanoseconds, trailing zeros kept).
const timeLayout = "2006-01-02T15:04:05.000000000Z07:00"

// maxAttempts bounds the retries of a write transaction that still found
// the database busy after BusyTimeout.
const maxAttempts = 5

// Figures are the numeric columns of a measurement, named as in the batch
// summary (unit in the name).
var Figures = []string{
	"diameter_mm", "flatness_mz_mm", "flatness_ls_mm", "concavity_mm", "concavity_pct_of_diameter",
	"noise_um", "coverage_pct", "tilt_deg", "rock_mm",
	"contact_area_pct", "mean_gap_mm", "max_gap_mm",
	"power_w", "flat_power_w", "loss_pct", "glass_max_c",
	"time_s", "flat_time_s", "extra_time_pct", "extra_energy_kj",
}

// IsFigure reports whether name is one of Figures.
func IsFigure(name string) bool { return slices.Contains(Figures, name) }

// NonNegative reports whether the figure name cannot be below zero by its
// definition: widths, distances, magnitudes, shares, powers and times.
// A control chart of such a figure clips its lower limit at 0 (package
// spc, Spec.NonNegative). Signed figures are not: concavity (negative for
// a domed base), loss_pct, extra_time_pct and extra_energy_kj (a base can
// come out a little ahead of its flat twin: 100·(1 − P/P_flat) is below 0
// when P exceeds P_flat, which the solver's tolerance allows for a
// near-flat base) and glass_max_c (a temperature in °C).
func NonNegative(name string) bool {
	switch name {
	case "diameter_mm", "flatness_mz_mm", "flatness_ls_mm", "noise_um", "coverage_pct",
		"tilt_deg", "rock_mm", "contact_area_pct", "mean_gap_mm", "max_gap_mm",
		"power_w", "flat_power_w", "time_s", "flat_time_s":
		return true
	}
	return false
}

// Errors a caller can test with errors.Is.
var (
	ErrNotFound      = errors.New("no such history database")
	ErrNotHistory    = errors.New("not a gapflux history database")
	ErrNewerSchema   = errors.New("history database written by a newer gapflux")
	ErrUnknownFigure = errors.New("unknown figure")
)

// Store is an open history database.
type Store struct {
	db   *sql.DB
	path string
}

// Run is one batch as recorded.
type Run struct {
	Started       time.Time // when the batch started; stored in UTC, RFC 3339
	SummarySHA256 string    // SHA-256 of the batch's summary.json bytes
	OutputDir     string    // the batch's output folder
}

// Row is one scan's result in a batch.
type Row struct {
	Path        string // slash path relative to the batch folder
	PartNumber  string
	Lot         string
	Status      string
	Quality     string
	InputSHA256 string
	JobSHA256   string
	// Figures holds the figures the scan has, by the names in Figures.
	Figures map[string]float64
}

// Open opens the history database at path for writing, creating it (and
// its folder's file, not the folder) when it does not exist and migrating
// an older schema.
func Open(ctx context.Context, path string) (*Store, error) {
	s, err := open(path)
	if err != nil {
		return nil, err
	}
	if err := s.withTx(ctx, s.migrate); err != nil {
		s.db.Close()
		return nil, fmt.Errorf("history %s: %w", path, err)
	}
	return s, nil
}

// OpenExisting opens a history database for reading. It never creates one:
// a missing file is ErrNotFound, a file of another schema version or
// another program ErrNewerSchema or ErrNotHistory.
func OpenExisting(ctx context.Context, path string) (*Store, error) {
	if _, err := os.Stat(path); err != nil {
		return nil, fmt.Errorf("history %s: %w (%v); give the database a batch wrote (OUT/history.sqlite or its --history)", path, ErrNotFound, err)
	}
	s, err := open(path)
	if err != nil {
		return nil, err
	}
	v, err := s.version(ctx, s.db)
	if err == nil && v != SchemaVersion {
		err = fmt.Errorf("schema version %d, this gapflux reads %d; run a batch with this gapflux on it to migrate it, or use the gapflux that wrote it", v, SchemaVersion)
		if v > SchemaVersion {
			err = fmt.Errorf("%w: schema version %d, this gapflux reads up to %d", ErrNewerSchema, v, SchemaVersion)
		}
	}
	if err != nil {
		s.db.Close()
		return nil, fmt.Errorf("history %s: %w", path, err)
	}
	return s, nil
}

func open(path string) (*Store, error) {
	if path == "" {
		return nil, errors.New("history: empty database path")
	}
	if strings.ContainsAny(path, "?#") {
		return nil, fmt.Errorf("history %s: the path may not contain ? or #; rename the file", path)
	}
	dsn := fmt.Sprintf("%s?_txlock=immediate&_pragma=busy_timeout(%d)&_pragma=foreign_keys(1)", path, BusyTimeout.Milliseconds())
	db, err := sql.Open("sqlite", dsn)
	if err != nil {
		return nil, fmt.Errorf("history %s: %w", path, err)
	}
	db.SetMaxOpenConns(1) // one writer per process; the lock is per connection
	return &Store{db: db, path: path}, nil
}

// Close closes the database.
func (s *Store) Close() error { return s.db.Close() }

// Path is the database's file.
func (s *Store) Path() string { return s.path }

type querier interface {
	QueryRowContext(ctx context.Context, query string, args ...any) *sql.Row
}

// version reads user_version after checking application_id; a fresh file
// (no tables, id 0) is version 0.
func (s *Store) version(ctx context.Context, q querier) (int, error) {
	var app, ver, tables int
	if err := q.QueryRowContext(ctx, "PRAGMA application_id").Scan(&app); err != nil {
		if isBusy(err) {
			return 0, err
		}
		return 0, fmt.Errorf("%w: %v", ErrNotHistory, err)
	}
	if err := q.QueryRowContext(ctx, "PRAGMA user_version").Scan(&ver); err != nil {
		return 0, err
	}
	if err := q.QueryRowContext(ctx, "SELECT count(*) FROM sqlite_schema").Scan(&tables); err != nil {
		return 0, err
	}
	switch {
	case app == ApplicationID:
		return ver, nil
	case app == 0 && ver == 0 && tables == 0:
		return 0, nil
	}
	return 0, fmt.Errorf("%w (application_id %#x, %d tables); give a database gapflux batch wrote, or a new file name", ErrNotHistory, app, tables)
}

// migrations[v] brings a database from version v to v+1.
var migrations = []func(ctx context.Context, tx *sql.Tx) error{
	createV1,
}

func createV1(ctx context.Context, tx *sql.Tx) error {
	var cols strings.Builder
	for _, f := range Figures {
		fmt.Fprintf(&cols, ",\n  %s REAL", f)
	}
	stmts := []string{
		`CREATE TABLE runs (
  run_id INTEGER PRIMARY KEY,
  started_utc TEXT NOT NULL,
  summary_sha256 TEXT NOT NULL,
  output_dir TEXT NOT NULL,
  rows_added INTEGER NOT NULL
)`,
		`CREATE TABLE measurements (
  run_id INTEGER NOT NULL REFERENCES runs(run_id),
  path TEXT NOT NULL,
  part_number TEXT NOT NULL,
  lot TEXT NOT NULL,
  status TEXT NOT NULL,
  quality TEXT NOT NULL,
  input_sha256 TEXT NOT NULL,
  job_sha256 TEXT NOT NULL` + cols.String() + `,
  PRIMARY KEY (path, input_sha256, job_sha256)
)`,
		`CREATE INDEX measurements_by_part ON measurements(part_number, run_id)`,
		fmt.Sprintf("PRAGMA application_id = %d", ApplicationID),
	}
	for _, q := range stmts {
		if _, err := tx.ExecContext(ctx, q); err != nil {
			return err
		}
	}
	return nil
}

// migrate runs the missing migration steps inside tx.
func (s *Store) migrate(ctx context.Context, tx *sql.Tx) error {
	v, err := s.version(ctx, tx)
	if err != nil {
		return err
	}
	if v > SchemaVersion {
		return fmt.Errorf("%w: schema version %d, this gapflux writes %d; use a newer gapflux or another --history file", ErrNewerSchema, v, SchemaVersion)
	}
	for ; v < SchemaVersion; v++ {
		if err := migrations[v](ctx, tx); err != nil {
			return fmt.Errorf("migrating the schema from version %d to %d: %w", v, v+1, err)
		}
		if _, err := tx.ExecContext(ctx, fmt.Sprintf("PRAGMA user_version = %d", v+1)); err != nil {
			return err
		}
	}
	return nil
}

// withTx runs f in one BEGIN IMMEDIATE transaction, retrying the whole
// transaction when the database stayed busy past BusyTimeout.
func (s *Store) withTx(ctx context.Context, f func(context.Context, *sql.Tx) error) error {
	var err error
	for attempt := 1; attempt <= maxAttempts; attempt++ {
		err = s.tryTx(ctx, f)
		if err == nil || !isBusy(err) {
			return err
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(time.Duration(attempt) * 100 * time.Millisecond):
		}
	}
	return fmt.Errorf("database still locked by another writer after %d attempts: %w", maxAttempts, err)
}

func (s *Store) tryTx(ctx context.Context, f func(context.Context, *sql.Tx) error) error {
	tx, err := s.db.BeginTx(ctx, nil) // BEGIN IMMEDIATE through _txlock
	if err != nil {
		return err
	}
	if err := f(ctx, tx); err != nil {
		tx.Rollback()
		return err
	}
	return tx.Commit()
}

// isBusy reports a SQLITE_BUSY or SQLITE_LOCKED result (any extended code).
func isBusy(err error) bool {
	var se *sqlite.Error
	if errors.As(err, &se) {
		c := se.Code() & 0xff
		return c == sqlite3.SQLITE_BUSY || c == sqlite3.SQLITE_LOCKED
	}
	return false
}

// Append records one batch and its rows in one transaction and returns the
// run's id and how many rows were new. A row whose key (path, input_sha256,
// job_sha256) is already stored is left as it is. Rows without both hashes
// cannot be keyed and are an error, as are figures not in Figures and
// values that are NaN or infinite.
func (s *Store) Append(ctx context.Context, run Run, rows []Row) (runID int64, added int, err error) {
	for _, r := range rows {
		if err := r.validate(); err != nil {
			return 0, 0, fmt.Errorf("history %s: %w", s.path, err)
		}
	}
	err = s.withTx(ctx, func(ctx context.Context, tx *sql.Tx) error {
		runID, added = 0, 0
		res, err := tx.ExecContext(ctx, `INSERT INTO runs(started_utc, summary_sha256, output_dir, rows_added) VALUES (?, ?, ?, 0)`,
			run.Started.UTC().Format(timeLayout), run.SummarySHA256, run.OutputDir)
		if err != nil {
			return err
		}
		if runID, err = res.LastInsertId(); err != nil {
			return err
		}
		cols := append([]string{"run_id", "path", "part_number", "lot", "status", "quality", "input_sha256", "job_sha256"}, Figures...)
		q := fmt.Sprintf("INSERT OR IGNORE INTO measurements(%s) VALUES (?%s)", strings.Join(cols, ", "), strings.Repeat(", ?", len(cols)-1))
		stmt, err := tx.PrepareContext(ctx, q)
		if err != nil {
			return err
		}
		defer stmt.Close()
		for _, r := range rows {
			args := []any{runID, r.Path, r.PartNumber, r.Lot, r.Status, r.Quality, r.InputSHA256, r.JobSHA256}
			for _, f := range Figures {
				if v, ok := r.Figures[f]; ok {
					args = append(args, v)
				} else {
					args = append(args, nil)
				}
			}
			res, err := stmt.ExecContext(ctx, args...)
			if err != nil {
				return fmt.Errorf("row %s: %w", r.Path, err)
			}
			n, _ := res.RowsAffected()
			added += int(n)
		}
		_, err = tx.ExecContext(ctx, `UPDATE runs SET rows_added = ? WHERE run_id = ?`, added, runID)
		return err
	})
	if err != nil {
		return 0, 0, fmt.Errorf("history %s: %w", s.path, err)
	}
	return runID, added, nil
}

func (r Row) validate() error {
	if r.Path == "" || r.InputSHA256 == "" || r.JobSHA256 == "" {
		return fmt.Errorf("row %q: path, input and job hashes are all needed to key a row", r.Path)
	}
	for name, v := range r.Figures {
		if !IsFigure(name) {
			return fmt.Errorf("row %s: %w %q", r.Path, ErrUnknownFigure, name)
		}
		if v != v || v > 1e308 || v < -1e308 {
			return fmt.Errorf("row %s: %s is %v; only finite values are stored", r.Path, name, v)
		}
	}
	return nil
}
