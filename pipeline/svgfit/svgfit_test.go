package svgfit

import (
	"bytes"
	"errors"
	"html"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"codeberg.org/go-fonts/liberation/liberationserifregular"
	xfont "golang.org/x/image/font"
	"golang.org/x/image/font/sfnt"
	"golang.org/x/image/math/fixed"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// textElem matches a text element as vgsvg writes it, with the width a
// Canvas adds: the width, the style and the escaped string.
var textElem = regexp.MustCompile(`<text(?: textLength="([^"]*)" lengthAdjust="spacingAndGlyphs")? x="[^"]*" y="[^"]*" transform="[^"]*"\s*style="([^"]*)">([^<]*)</text>`)

// fontSize matches the font size of a text element's style.
var fontSize = regexp.MustCompile(`font-size:([0-9.]+)px`)

// testPlot returns a plot with a two-line title, axis labels, tick labels
// and a legend, all in gonum's default font (Liberation Serif).
func testPlot(t *testing.T) *plot.Plot {
	t.Helper()
	p := plot.New()
	p.Title.Text = "heat flux by ring\nverdict FAIL"
	p.X.Label.Text = "ring mid radius (mm)"
	p.Y.Label.Text = "heat flux into the pan (kW/m²)"
	line, err := plotter.NewLine(plotter.XYs{{X: 0, Y: 56}, {X: 50, Y: 57}, {X: 100, Y: 61}})
	if err != nil {
		t.Fatal(err)
	}
	p.Add(line)
	p.Legend.Add("heating zone edge", line)
	p.Legend.Add("largest & <mean>", line) // escaped by vgsvg
	return p
}

// TestTextLengths: every text element of a plot drawn on a Canvas carries,
// as textLength, the width its string has in the plot's font at its size.
// The reference width is read from the font file by golang.org/x/image
// v0.30.0's sfnt package (fontWidth), code apart from gonum/plot's; the
// tolerance is its 1/64 pt steps per character plus the 5 significant
// digits written.
func TestTextLengths(t *testing.T) {
	ttf, err := sfnt.Parse(liberationserifregular.TTF)
	if err != nil {
		t.Fatal(err)
	}
	c := New(4*vg.Inch, 3*vg.Inch)
	testPlot(t).Draw(draw.New(c))
	var doc bytes.Buffer
	if _, err := c.WriteTo(&doc); err != nil {
		t.Fatal(err)
	}
	elems := textElem.FindAllSubmatch(doc.Bytes(), -1)
	if n := bytes.Count(doc.Bytes(), []byte("<text")); n != len(elems) || n < 8 {
		t.Fatalf("%d text elements matched of %d (want all, at least 8)", len(elems), n)
	}
	for _, e := range elems {
		str, style := html.UnescapeString(string(e[3])), string(e[2])
		if !strings.Contains(style, "font-family:Liberation Serif;font-variant:normal;font-weight:normal;font-style:normal") {
			t.Fatalf("%q: style %q, want Liberation Serif regular (the test's reference font)", str, style)
		}
		size, err := strconv.ParseFloat(fontSize.FindStringSubmatch(style)[1], 64)
		if err != nil {
			t.Fatal(err)
		}
		want := fontWidth(t, ttf, size, str)
		got, err := strconv.ParseFloat(string(e[1]), 64)
		if err != nil {
			t.Fatalf("%q: textLength %q: %v", str, e[1], err)
		}
		if tol := float64(utf8.RuneCountInString(str))/64 + 1e-4*want; math.Abs(got-want) > tol {
			t.Errorf("%q at %g px: textLength %g pt, the font's width %g pt (tolerance %.3g)", str, size, got, want, tol)
		}
	}
}

// fontWidth returns the width, pt, of str set in f at size pt: the sum of
// its glyphs' advances and of the kern table's adjustments between
// neighbours, each in 1/64 pt at that size, without hinting. (Not
// through opentype.Face: its Kern, in x/image v0.30.0, gives the pair's
// adjustment at 32 pixels per em whatever the face's size.)
func fontWidth(t *testing.T, f *sfnt.Font, size float64, str string) float64 {
	t.Helper()
	var buf sfnt.Buffer
	ppem := fixed.Int26_6(math.Round(size * 64))
	var w fixed.Int26_6
	prev := sfnt.GlyphIndex(0)
	for k, r := range []rune(str) {
		g, err := f.GlyphIndex(&buf, r)
		if err != nil {
			t.Fatal(err)
		}
		if k > 0 {
			kern, err := f.Kern(&buf, prev, g, ppem, xfont.HintingNone)
			if err != nil && !errors.Is(err, sfnt.ErrNotFound) {
				t.Fatal(err)
			}
			w += kern
		}
		adv, err := f.GlyphAdvance(&buf, g, ppem, xfont.HintingNone)
		if err != nil {
			t.Fatal(err)
		}
		w += adv
		prev = g
	}
	return float64(w) / 64
}

// TestFitText: the attributes go into the text elements in order, an
// empty string's element gets none, nothing else changes, and a document
// with fewer or more text elements than widths is an error.
func TestFitText(t *testing.T) {
	doc := "<svg>\n<text x=\"1\" y=\"2\">ab</text>\n<text x=\"3\" y=\"4\"></text>\n<text x=\"5\" y=\"6\">&lt;text x=&#34;</text>\n</svg>\n"
	tests := []struct {
		name    string
		widths  []vg.Length
		want    string
		wantErr string
	}{
		{"three", []vg.Length{12.5, 0, 1.234567}, "<svg>\n<text textLength=\"12.5\" lengthAdjust=\"spacingAndGlyphs\" x=\"1\" y=\"2\">ab</text>\n<text x=\"3\" y=\"4\"></text>\n<text textLength=\"1.2346\" lengthAdjust=\"spacingAndGlyphs\" x=\"5\" y=\"6\">&lt;text x=&#34;</text>\n</svg>\n", ""},
		{"too few widths", []vg.Length{1, 2}, "", "more text elements in the document than the 2 strings drawn"},
		{"too many widths", []vg.Length{1, 2, 3, 4}, "", "text 4 of 4 not found"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := fitText([]byte(doc), tt.widths)
			if tt.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tt.wantErr) {
					t.Fatalf("error %v, want one containing %q", err, tt.wantErr)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if string(got) != tt.want {
				t.Errorf("got\n%s\nwant\n%s", got, tt.want)
			}
		})
	}
}
