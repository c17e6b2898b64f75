package svgfit_test

import (
	"bytes"
	"fmt"
	"log"
	"regexp"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"gapflux/pipeline/svgfit"
)

// A plot drawn on a Canvas: each text element carries its string's width
// in the plot's font (Liberation Serif; the title at 12 pt), for the
// reader to fit its own font into.
func Example() {
	p := plot.New()
	p.Title.Text = "gap under base"
	c := svgfit.New(3*vg.Inch, 2*vg.Inch)
	p.Draw(draw.New(c))
	var doc bytes.Buffer
	if _, err := c.WriteTo(&doc); err != nil {
		log.Fatal(err)
	}
	text := regexp.MustCompile(`<text textLength="([^"]*)"[^>]*>([^<]*)</text>`)
	for _, m := range text.FindAllSubmatch(doc.Bytes(), 2) {
		fmt.Printf("%q: %s pt\n", m[2], m[1])
	}
	// Output:
	// "gap under base": 71.971 pt
	// "-1": 8.3301 pt
}
