package pipeline

import (
	"image"
	"image/color"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
)

// measureCanvas is a canvas of a given size that draws nothing: enough to
// lay out a plot (plot.DataCanvas, Legend.Rectangle measure text with the
// fonts, not the canvas) without allocating and clearing the image a
// vgimg canvas would.
type measureCanvas struct{ w, h vg.Length }

func (c measureCanvas) Size() (w, h vg.Length)               { return c.w, c.h }
func (measureCanvas) SetLineWidth(vg.Length)                 {}
func (measureCanvas) SetLineDash([]vg.Length, vg.Length)     {}
func (measureCanvas) SetColor(color.Color)                   {}
func (measureCanvas) Rotate(float64)                         {}
func (measureCanvas) Translate(vg.Point)                     {}
func (measureCanvas) Scale(float64, float64)                 {}
func (measureCanvas) Push()                                  {}
func (measureCanvas) Pop()                                   {}
func (measureCanvas) Stroke(vg.Path)                         {}
func (measureCanvas) Fill(vg.Path)                           {}
func (measureCanvas) FillString(font.Face, vg.Point, string) {}
func (measureCanvas) DrawImage(vg.Rectangle, image.Image)    {}
