package html

import (
	"bytes"
	_ "embed"
	"encoding/base64"
	"fmt"
	"html/template"
	"io"
	"path"
)

//go:embed page.css
var pageCSS string

//go:embed sort.js
var sortJS string

//go:embed scan.tmpl
var scanTmpl string

//go:embed index.tmpl
var indexTmpl string

//go:embed compare.tmpl
var compareTmpl string

// funcs are the templates' helpers.
var funcs = template.FuncMap{
	"css": func() template.CSS { return template.CSS(pageCSS) },
	"js":  func() template.JS { return template.JS(sortJS) },
	// svgURI and pngURI inline a picture as a data: URL.
	"svgURI": func(b []byte) template.URL {
		return template.URL("data:image/svg+xml;base64," + base64.StdEncoding.EncodeToString(b))
	},
	"pngURI": func(b []byte) template.URL {
		return template.URL("data:image/png;base64," + base64.StdEncoding.EncodeToString(b))
	},
	"cellmap": func(m *CellMap) (template.HTML, error) { return m.SVG() },
	// dir and base split a scan's slash path for display.
	"dir": func(p string) string {
		if d := path.Dir(p); d != "." {
			return d + "/"
		}
		return ""
	},
	"base": path.Base,
	"pct1": func(v float64) string { return fmt.Sprintf("%.1f", v) },
}

var (
	scanT    = template.Must(template.New("scan").Funcs(funcs).Parse(scanTmpl))
	indexT   = template.Must(template.New("index").Funcs(funcs).Parse(indexTmpl))
	compareT = template.Must(template.New("compare").Funcs(funcs).Parse(compareTmpl))
)

// WriteScan writes report.html for one scan.
func WriteScan(w io.Writer, p *ScanPage) error {
	return execute(w, scanT, p)
}

// WriteIndex writes index.html for a batch.
func WriteIndex(w io.Writer, p *IndexPage) error {
	for i, r := range p.Rows {
		if len(r.Cells) != len(p.Columns) {
			return fmt.Errorf("index row %d (%s): %d cells for %d columns", i+1, r.Name, len(r.Cells), len(p.Columns))
		}
	}
	return execute(w, indexT, p)
}

// WriteCompare writes compare.html for two scans of one base.
func WriteCompare(w io.Writer, p *ComparePage) error {
	for _, t := range []Table{p.Figures, p.Rings} {
		for i, r := range t.Rows {
			if len(r) != len(t.Columns) {
				return fmt.Errorf("compare table row %d: %d cells for %d columns", i+1, len(r), len(t.Columns))
			}
		}
	}
	return execute(w, compareT, p)
}

// execute renders into a buffer first, so that a template error leaves
// nothing half-written.
func execute(w io.Writer, t *template.Template, data any) error {
	var b bytes.Buffer
	if err := t.Execute(&b, data); err != nil {
		return fmt.Errorf("html: %w", err)
	}
	_, err := w.Write(b.Bytes())
	return err
}
