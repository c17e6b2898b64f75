// Package html renders the human-readable pages of gapflux: report.html
// for one scan and index.html for a batch. Each page is one self-contained
// file (html/template, embedded stylesheet with a print layout, a few lines
// of plain script to sort the index table, pictures inline as data: URIs or
// SVG), so it opens from a folder or an e-mail with no network.
//
// The package knows nothing of the analysis: the caller fills the view
// structs below with text already formatted in its units, and the package
// lays them out.
package html

// ScanPage is everything report.html shows for one scan.
type ScanPage struct {
	Name       string // the scan, as named in the batch (relative path) or on the command line
	PartNumber string // from the batch manifest; "" when unknown
	Lot        string
	// Status is the page's headline class: "pass", "fail" (out of
	// tolerance), "rejected" (stopped by the data-quality gate) or "none"
	// (no verdict); Headline says it in words.
	Status   string
	Headline string
	Reasons  []string // why it failed or was rejected
	Quality  Quality
	// Sections are the figure groups: form, pose, gap, heat, heat-up.
	Sections []Section
	Pictures []Picture
	CellMap  *CellMap // measured and interpolated cells; nil when not gridded
	Rings    Table
	Warnings []string
	Scenario []Figure // the job's key values
	Inputs   []Figure // files, formats, hashes
}

// Quality is the data-quality gate's outcome.
type Quality struct {
	Status string // ok, warn, reject; "" when the gate did not run
	Checks []Check
}

// Check is one data-quality check, formatted.
type Check struct {
	Name    string
	Status  string // ok, warn, reject, not-measured
	Figure  string // with its unit
	Limits  string // e.g. "warn below 120, reject below 40"
	Message string
}

// Section is a titled group of figures.
type Section struct {
	Title   string
	Figures []Figure
}

// Figure is one labelled value; Value is already formatted, Unit is shown
// beside it, Note under it.
type Figure struct {
	Label, Value, Unit, Note string
	// Flag marks a figure that broke a limit (shown emphasised).
	Flag bool
}

// Picture is one map or chart. SVG holds an SVG document, shown inline as
// an image (so two pictures' element ids never collide); Alt describes it.
type Picture struct {
	Title, Caption, Alt string
	SVG                 []byte
}

// Table is a plain table: Columns are the headers (with units), Rows the
// formatted cells.
type Table struct {
	Columns []string
	Rows    [][]string
}

// Halves splits the table's rows into two tables with the same columns,
// the first holding the extra row of an odd count (the print layout sets
// them side by side).
func (t Table) Halves() [2]Table {
	h := (len(t.Rows) + 1) / 2
	return [2]Table{{Columns: t.Columns, Rows: t.Rows[:h]}, {Columns: t.Columns, Rows: t.Rows[h:]}}
}

// ComparePage is everything compare.html shows for two scans of one base:
// B (the later scan) against A (the reference) in A's base frame.
type ComparePage struct {
	A, B string // the two scans as given
	// Headline figures: the turn found, permanent set, height change.
	Headline []Figure
	Pictures []Picture // the height and gap change maps
	Figures  Table     // headline figures of A and B and their change
	Rings    Table     // ring-by-ring changes
	Warnings []string
	Inputs   []Figure // files and hashes
}

// IndexPage is everything index.html shows for a batch.
type IndexPage struct {
	Title  string
	Counts []Count
	// Columns head the table after the thumbnail and scan columns; each
	// row has one cell per column.
	Columns []Column
	Rows    []IndexRow
	Notes   []string // lines under the table (what the statuses mean, ...)
	// Trend is the control-chart section under the table.
	Trend Trend
}

// Trend is the index's section of control charts drawn from the history
// database: one chart per part number of the batch.
type Trend struct {
	Figure string // the charted figure, e.g. "loss_pct"
	// Lines say where the charts come from: the database, the baseline
	// window, the run rules. When there is nothing to chart, one line
	// says why and Charts is empty.
	Lines  []string
	Charts []TrendChart
	// Few says, one line per part, why a part of the batch has no chart
	// (fewer than 2 points).
	Few []string
}

// TrendChart is one part number's individuals and moving-range chart.
type TrendChart struct {
	Part    string
	Caption string // points, baseline, limits, tonight's points
	// Flagged lists the points out of control, one line each; empty when
	// none is.
	Flagged []string
	SVG     []byte // the chart as an SVG document
	Alt     string
}

// Count is the number of scans of one status.
type Count struct {
	Status string
	N      int
}

// Column is one sortable column of the index table.
type Column struct {
	Key   string // a short identifier (test hooks, CSS)
	Label string // with its unit
	// Numeric columns sort by number and are right-aligned.
	Numeric bool
}

// IndexRow is one scan of the index.
type IndexRow struct {
	Name   string
	Status string // ok, failed, out-of-tolerance, rejected, not-run
	// Link is the relative URL of the scan's page ("" when there is none).
	Link string
	// Thumb is a small PNG of the scan's gap map; nil when there is none.
	Thumb []byte
	Cells []Cell
	Note  string // error or reasons
}

// Cell is one formatted value of the index table; Sort is the key the
// table sorts by ("" sorts last whatever the direction).
type Cell struct {
	Text, Sort string
}
