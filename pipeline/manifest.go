package pipeline

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// ManifestRow holds per-scan overrides from a batch manifest.
type ManifestRow struct {
	Path         string   // scan path relative to the batch folder
	Line         int      // the row's line in the manifest, for messages
	PartNumber   string   // free text, carried into the summary
	Lot          string   // free text, carried into the summary
	Hob          string   // hob scan or profile, relative to the batch folder
	Job          string   // a job file for this scan, relative to the batch folder
	PanMassKg    *float64 // overrides pan.mass_kg
	WaterMassKg  *float64 // overrides water.mass_kg
	BaseMaterial string   // overrides the material of a single-layer base
	BaseMM       *float64 // overrides the thickness of a single-layer base
	Face         string   // overrides grid.face
	Units        string   // overrides grid.units
	DiameterMM   *float64 // overrides grid.diameter_mm
	// BaseID names the physical base a scan is of; scans with one base_id
	// are re-scans of one base for "gapflux repeat". The batch ignores it.
	BaseID string
}

// ManifestColumns documents the manifest's columns; only path is required.
var ManifestColumns = []string{"path", "part_number", "lot", "hob", "job", "pan_mass_kg",
	"water_mass_kg", "base_material", "base_thickness_mm", "face", "units", "diameter_mm", "base_id"}

// manifestMax is the largest value each numeric column accepts. They are
// our own plausibility bounds for cookware (common practice: a pan and its
// water load weigh kilograms, a base is millimetres thick and at most about
// half a metre across); the job's own validation applies on top.
var manifestMax = map[string]float64{
	"pan_mass_kg": 100, "water_mass_kg": 100, "base_thickness_mm": 100, "diameter_mm": 2000,
}

// ManifestError is a fault in a manifest with its position. A ManifestError
// returned by ReadManifest means the whole manifest is unusable (a
// configuration error); in Manifest.Problems it fails one row. The message
// never quotes the file's content.
type ManifestError struct {
	Name      string
	Line, Col int // 1-based; 0 when not known
	Msg       string
}

func (e *ManifestError) Error() string {
	switch {
	case e.Line > 0 && e.Col > 0:
		return fmt.Sprintf("%s:%d:%d: %s", e.Name, e.Line, e.Col, e.Msg)
	case e.Line > 0:
		return fmt.Sprintf("%s:%d: %s", e.Name, e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.Name, e.Msg)
}

// ManifestProblem is a manifest row that cannot be used. The batch fails the
// scan the row names (Path) instead of analysing it with wrong settings.
type ManifestProblem struct {
	Path string // the row's cleaned path; "" when the path cell itself is bad
	Line int    // the row's line
	Err  error  // a *ManifestError naming file, line, column and the fix
}

// Manifest is a decoded manifest: the usable rows by path, and the rows
// that failed, in file order.
type Manifest struct {
	Name     string
	Rows     map[string]ManifestRow
	Problems []ManifestProblem
}

// utf8BOM is the byte order mark some spreadsheet programs put first.
var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

// ReadManifest decodes a manifest CSV: an optional UTF-8 byte order mark, a
// header row naming columns from ManifestColumns (any order, path required),
// then one row per scan. It returns an error (a *ManifestError) only when the
// manifest as a whole is unusable: no header, an unknown or repeated column,
// no path column, or a read error. A bad row (malformed CSV, a bad value, a
// path outside the folder, the same path on two rows) becomes a
// ManifestProblem and the other rows stand.
func ReadManifest(r io.Reader, name string) (*Manifest, error) {
	br := bufio.NewReader(r)
	if b, err := br.Peek(len(utf8BOM)); err == nil && bytes.Equal(b, utf8BOM) {
		br.Discard(len(utf8BOM))
	}
	cr := csv.NewReader(br)
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	cr.FieldsPerRecord = -1
	col, err := readManifestHeader(cr, name)
	if err != nil {
		return nil, err
	}
	m := &Manifest{Name: name, Rows: map[string]ManifestRow{}}
	lines := map[string][]int{} // every line that names a path
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			m.Problems = append(m.Problems, ManifestProblem{Line: pe.StartLine, Err: &ManifestError{Name: name,
				Line: pe.Line, Col: pe.Column, Msg: "not valid CSV (" + pe.Err.Error() + "): fix the quoting of this row"}})
			continue
		}
		if err != nil {
			return nil, &ManifestError{Name: name, Msg: "reading: " + err.Error()}
		}
		row, perr := parseManifestRow(cr, rec, col, len(col), name)
		if row.Path != "" {
			lines[row.Path] = append(lines[row.Path], row.Line)
		}
		if perr != nil {
			m.Problems = append(m.Problems, ManifestProblem{Path: row.Path, Line: row.Line, Err: perr})
			continue
		}
		m.Rows[row.Path] = row
	}
	m.failDuplicates(lines)
	return m, nil
}

// readManifestHeader reads the header row and maps column names to indexes.
func readManifestHeader(cr *csv.Reader, name string) (map[string]int, error) {
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, &ManifestError{Name: name, Msg: "empty: want a header row naming the columns, path first"}
	}
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return nil, &ManifestError{Name: name, Line: pe.Line, Col: pe.Column,
			Msg: "header is not valid CSV (" + pe.Err.Error() + "): save the manifest as CSV with a header row"}
	}
	if err != nil {
		return nil, &ManifestError{Name: name, Msg: "reading: " + err.Error()}
	}
	known := map[string]bool{}
	for _, c := range ManifestColumns {
		known[c] = true
	}
	col := map[string]int{}
	for i, h := range header {
		line, pos := cr.FieldPos(i)
		h = strings.ToLower(strings.TrimSpace(h))
		if !known[h] {
			return nil, &ManifestError{Name: name, Line: line, Col: pos,
				Msg: "header field " + strconv.Itoa(i+1) + " is not a known column; known: " + strings.Join(ManifestColumns, ", ")}
		}
		if _, dup := col[h]; dup {
			return nil, &ManifestError{Name: name, Line: line, Col: pos, Msg: "column " + h + " given twice"}
		}
		col[h] = i
	}
	if _, ok := col["path"]; !ok {
		line, _ := cr.FieldPos(0)
		return nil, &ManifestError{Name: name, Line: line, Msg: "no path column: the header must name path"}
	}
	return col, nil
}

// parseManifestRow checks one record. It returns the row (with Path set
// whenever the path cell is usable, even when another cell is bad) and the
// first fault found.
func parseManifestRow(cr *csv.Reader, rec []string, col map[string]int, nHeader int, name string) (ManifestRow, error) {
	line, _ := cr.FieldPos(0)
	row := ManifestRow{Line: line}
	fail := func(c string, msg string) error {
		l, pos := line, 0
		if i, ok := col[c]; ok && i < len(rec) {
			l, pos = cr.FieldPos(i)
		}
		return &ManifestError{Name: name, Line: l, Col: pos, Msg: msg}
	}
	get := func(c string) string {
		if i, ok := col[c]; ok && i < len(rec) {
			return strings.TrimSpace(rec[i])
		}
		return ""
	}
	p, err := ManifestPath(get("path"))
	if err != nil {
		return row, fail("path", "path: "+err.Error())
	}
	row.Path = p
	if len(rec) > nHeader {
		return row, fail("path", fmt.Sprintf("%d fields, but the header names %d columns: remove the extra cells or quote a cell holding a comma", len(rec), nHeader))
	}
	for _, c := range ManifestColumns {
		if !utf8.ValidString(get(c)) {
			return row, fail(c, c+" is not valid UTF-8: save the manifest as UTF-8")
		}
	}
	for _, c := range []string{"hob", "job"} {
		v := get(c)
		if v == "" {
			continue
		}
		clean, err := ManifestPath(v)
		if err != nil {
			return row, fail(c, c+": "+err.Error())
		}
		if clean == row.Path {
			return row, fail(c, c+" names the scan itself: give the "+map[string]string{"hob": "hob top's scan or profile", "job": "job file"}[c])
		}
		if c == "hob" {
			row.Hob = clean
		} else {
			row.Job = clean
		}
	}
	var perr error
	num := func(c string) *float64 {
		v := get(c)
		if v == "" || perr != nil {
			return nil
		}
		f, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsInf(f, 0) || math.IsNaN(f) || f <= 0 || f > manifestMax[c] {
			perr = fail(c, fmt.Sprintf("%s is not a number in (0, %g]", c, manifestMax[c]))
			return nil
		}
		return &f
	}
	row.PartNumber, row.Lot = get("part_number"), get("lot")
	row.PanMassKg, row.WaterMassKg = num("pan_mass_kg"), num("water_mass_kg")
	row.BaseMaterial, row.BaseMM = get("base_material"), num("base_thickness_mm")
	row.Face, row.Units, row.DiameterMM = get("face"), get("units"), num("diameter_mm")
	if row.BaseID = get("base_id"); perr == nil && !validBaseID(row.BaseID) {
		perr = fail("base_id", fmt.Sprintf("base_id is longer than %d bytes or holds a control character: give a short name of the base, such as its serial number", maxBaseID))
	}
	return row, perr
}

// maxBaseID bounds a base_id, which becomes a group name in repeat.csv and
// repeat.json (our bound: a serial number or a short label fits).
const maxBaseID = 100

// validBaseID tells whether id is usable as a base's name: at most
// maxBaseID bytes and no control characters ("" is no base_id).
func validBaseID(id string) bool {
	if len(id) > maxBaseID {
		return false
	}
	return strings.IndexFunc(id, unicode.IsControl) < 0
}

// failDuplicates turns every path named on more than one line into a
// problem naming all its lines; none of those rows is used.
func (m *Manifest) failDuplicates(lines map[string][]int) {
	var dups []string
	for p, ls := range lines {
		if len(ls) > 1 {
			dups = append(dups, p)
		}
	}
	sort.Strings(dups)
	for _, p := range dups {
		ls := lines[p]
		delete(m.Rows, p)
		s := make([]string, len(ls))
		for i, l := range ls {
			s[i] = strconv.Itoa(l)
		}
		m.Problems = append(m.Problems, ManifestProblem{Path: p, Line: ls[0], Err: &ManifestError{Name: m.Name, Line: ls[0],
			Msg: "lines " + strings.Join(s, ", ") + " all name the same scan: keep one row per scan"}})
	}
}

// Apply returns job with the row's overrides.
func (m ManifestRow) Apply(job Job) (Job, error) {
	if m.PanMassKg != nil {
		job.Pan.MassKg = *m.PanMassKg
	}
	if m.WaterMassKg != nil {
		job.Water.MassKg = *m.WaterMassKg
	}
	if m.BaseMaterial != "" || m.BaseMM != nil {
		if len(job.Pan.Layers) != 1 {
			return job, fmt.Errorf("manifest row %s: base_material/base_thickness_mm need a single-layer base; use a per-scan job file", m.Path)
		}
		l := job.Pan.Layers[0]
		if m.BaseMaterial != "" {
			l.Material = m.BaseMaterial
		}
		if m.BaseMM != nil {
			l.ThicknessMM = *m.BaseMM
		}
		job.Pan.Layers = []LayerJob{l}
	}
	if m.Face != "" {
		job.Grid.Face = m.Face
	}
	if m.Units != "" {
		job.Grid.Units = m.Units
	}
	if m.DiameterMM != nil {
		job.Grid.DiameterMM = *m.DiameterMM
	}
	return job, job.Validate()
}
