package history

import (
	"context"
	"fmt"
	"time"
)

// Point is one stored value of a figure, in the figure's unit.
type Point struct {
	RunID       int64
	Started     time.Time // the batch's start, UTC
	Path        string
	Lot         string
	Status      string
	InputSHA256 string
	Value       float64
}

// ChartStatuses are the statuses whose rows make chart points: a scan that
// passed or was out of tolerance is real output of the process; a rejected
// scan's figures come from data the quality gate did not trust, and a
// failed scan has none.
var ChartStatuses = []string{"ok", "out-of-tolerance"}

// Parts lists the part numbers with at least one stored row, sorted. Rows
// without a part number are not listed.
func (s *Store) Parts(ctx context.Context) ([]string, error) {
	rows, err := s.db.QueryContext(ctx, `SELECT DISTINCT part_number FROM measurements WHERE part_number <> '' ORDER BY part_number`)
	if err != nil {
		return nil, fmt.Errorf("history %s: %w", s.path, err)
	}
	defer rows.Close()
	var out []string
	for rows.Next() {
		var p string
		if err := rows.Scan(&p); err != nil {
			return nil, fmt.Errorf("history %s: %w", s.path, err)
		}
		out = append(out, p)
	}
	return out, rows.Err()
}

// Series returns the values of figure for part, in the order measured: by
// the batch's start time, then run id, then path. Only rows with a status
// in ChartStatuses and a value are returned.
func (s *Store) Series(ctx context.Context, part, figure string) ([]Point, error) {
	if !IsFigure(figure) {
		return nil, fmt.Errorf("%w %q; choose one of %v", ErrUnknownFigure, figure, Figures)
	}
	if part == "" {
		return nil, fmt.Errorf("empty part number; give one of the part numbers the history holds")
	}
	// figure is one of Figures, so it is safe inside the statement.
	q := fmt.Sprintf(`SELECT m.run_id, r.started_utc, m.path, m.lot, m.status, m.input_sha256, m.%s
FROM measurements m JOIN runs r ON r.run_id = m.run_id
WHERE m.part_number = ? AND m.%s IS NOT NULL AND m.status IN (?, ?)
ORDER BY r.started_utc, m.run_id, m.path`, figure, figure)
	rows, err := s.db.QueryContext(ctx, q, part, ChartStatuses[0], ChartStatuses[1])
	if err != nil {
		return nil, fmt.Errorf("history %s: %w", s.path, err)
	}
	defer rows.Close()
	var out []Point
	for rows.Next() {
		var p Point
		var started string
		if err := rows.Scan(&p.RunID, &started, &p.Path, &p.Lot, &p.Status, &p.InputSHA256, &p.Value); err != nil {
			return nil, fmt.Errorf("history %s: %w", s.path, err)
		}
		if p.Started, err = time.Parse(time.RFC3339Nano, started); err != nil { // any RFC 3339 width
			return nil, fmt.Errorf("history %s: run %d: start time %q: %w", s.path, p.RunID, started, err)
		}
		out = append(out, p)
	}
	return out, rows.Err()
}

// Counts returns the number of runs and of stored rows.
func (s *Store) Counts(ctx context.Context) (runs, rows int, err error) {
	if err = s.db.QueryRowContext(ctx, `SELECT count(*) FROM runs`).Scan(&runs); err == nil {
		err = s.db.QueryRowContext(ctx, `SELECT count(*) FROM measurements`).Scan(&rows)
	}
	if err != nil {
		return 0, 0, fmt.Errorf("history %s: %w", s.path, err)
	}
	return runs, rows, nil
}
