// Package reftable reads the reference tables that
// testdata/reference/gen.py writes from outside libraries (IAPWS water and
// air properties, Planck blackbody fractions, erfc⁻¹), for the tests of the
// packages that compute the same quantities. It is test support: it is
// imported only from _test.go files.
//
// A table is CSV: '#' header lines naming the library and its version, one
// line of column names, then rows of numbers.
package reftable

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"
)

// maxTableBytes bounds a table file; the committed tables are a few kB.
const maxTableBytes = 1 << 20

// Table is one reference table.
type Table struct {
	Name    string         // file name, for messages
	Header  []string       // the '#' lines, without the '#'
	Columns []string       // column names
	Rows    [][]float64    // values, one slice per row, in column order
	index   map[string]int // column name -> position
}

// Source returns the header line that names the packages and versions
// ("Packages: ..."), or "" if there is none.
func (t *Table) Source() string {
	for _, h := range t.Header {
		if strings.HasPrefix(h, "Packages:") {
			return h
		}
	}
	return ""
}

// Col returns column name of every row. It returns an error naming the file
// if the table has no such column.
func (t *Table) Col(name string) ([]float64, error) {
	j, ok := t.index[name]
	if !ok {
		return nil, fmt.Errorf("%s: no column %q (have %s)", t.Name, name, strings.Join(t.Columns, ","))
	}
	out := make([]float64, len(t.Rows))
	for i, r := range t.Rows {
		out[i] = r[j]
	}
	return out, nil
}

// Dir returns the absolute path of testdata/reference in this module.
func Dir() string {
	_, file, _, _ := runtime.Caller(0)
	return filepath.Join(filepath.Dir(file), "..", "..", "testdata", "reference")
}

// Load reads the named table from Dir.
func Load(name string) (*Table, error) {
	path := filepath.Join(Dir(), name)
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("reference table: %w (regenerate with /usr/bin/python3 testdata/reference/gen.py)", err)
	}
	defer f.Close()
	if fi, err := f.Stat(); err == nil && fi.Size() > maxTableBytes {
		return nil, fmt.Errorf("%s: %d bytes, more than the %d a reference table may have", path, fi.Size(), maxTableBytes)
	}
	return parse(name, f)
}

func parse(name string, r io.Reader) (*Table, error) {
	t := &Table{Name: name, index: map[string]int{}}
	sc := bufio.NewScanner(r)
	line := 0
	for sc.Scan() {
		line++
		s := strings.TrimSpace(sc.Text())
		switch {
		case s == "":
			continue
		case strings.HasPrefix(s, "#"):
			t.Header = append(t.Header, strings.TrimSpace(s[1:]))
			continue
		case t.Columns == nil:
			t.Columns = strings.Split(s, ",")
			for j, c := range t.Columns {
				t.index[c] = j
			}
			continue
		}
		fields := strings.Split(s, ",")
		if len(fields) != len(t.Columns) {
			return nil, fmt.Errorf("%s:%d: %d fields, want %d", name, line, len(fields), len(t.Columns))
		}
		row := make([]float64, len(fields))
		for j, fs := range fields {
			v, err := strconv.ParseFloat(fs, 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%s:%d: column %s: %q is not a finite number", name, line, t.Columns[j], fs)
			}
			row[j] = v
		}
		t.Rows = append(t.Rows, row)
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s:%d: %w", name, line, err)
	}
	if len(t.Rows) == 0 {
		return nil, errors.New(name + ": no rows")
	}
	return t, nil
}

// MustLoad is Load for tests: it stops the test on error.
func MustLoad(tb testing.TB, name string) *Table {
	tb.Helper()
	t, err := Load(name)
	if err != nil {
		tb.Fatal(err)
	}
	return t
}

// MustCol is Col for tests: it stops the test on error.
func (t *Table) MustCol(tb testing.TB, name string) []float64 {
	tb.Helper()
	c, err := t.Col(name)
	if err != nil {
		tb.Fatal(err)
	}
	return c
}

// BlackbodyTable is the file of Planck blackbody fractions F(0→λT).
const BlackbodyTable = "blackbody_planck.csv"

// CheckBlackbodyFraction checks a function fraction(λT) of the blackbody
// fractional emissive power F(0→λT), λT in µm·K, against every row of the
// Planck table (numerical integration of Planck's law by scipy, see the
// table's header), 1000 to 50000 µm·K, within the absolute tolerance tol.
// It reports each failing row and returns the largest absolute deviation.
//
// Any F(λT) implementation in the project can be checked with it, e.g.
//
//	reftable.CheckBlackbodyFraction(t, func(lt float64) float64 { return thermal.BlackbodyFraction(lt * 1e-6) }, 1e-6)
func CheckBlackbodyFraction(tb testing.TB, fraction func(lambdaTUmK float64) float64, tol float64) float64 {
	tb.Helper()
	t := MustLoad(tb, BlackbodyTable)
	lt, f := t.MustCol(tb, "lambda_t_umk"), t.MustCol(tb, "fraction")
	worst := 0.0
	for i := range lt {
		got := fraction(lt[i])
		d := math.Abs(got - f[i])
		if !(d <= tol) { // NaN fails too
			tb.Errorf("F(0→%g µm·K) = %.8f, Planck table (%s) has %.8f", lt[i], got, t.Source(), f[i])
		}
		if d > worst || math.IsNaN(d) {
			worst = d
		}
	}
	return worst
}
