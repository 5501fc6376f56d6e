package plot

import (
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// TextBox is where one string of a drawn figure sits: its text and the
// rectangle from its left end on the descent line to its right end on the
// ascent line, in points from the figure's lower left corner.
type TextBox struct {
	Text string
	Min  vg.Point
	Max  vg.Point
}

// Overlaps reports whether the boxes a and b share more than a hairline
// (0.5 pt) of area.
func (a TextBox) Overlaps(b TextBox) bool {
	const slack = 0.5
	return a.Min.X+slack < b.Max.X && b.Min.X+slack < a.Max.X && a.Min.Y+slack < b.Max.Y && b.Min.Y+slack < a.Max.Y
}

// TextBoxes lays the figure out at its size and returns the box of every
// horizontal string drawn (titles, tick labels, the x axis label, legends
// and the notes beside marks); rotated text (the y axis label) is left
// out. It is what tests check for overlapping labels.
func (f *Figure) TextBoxes() []TextBox {
	if len(f.panels) == 0 {
		return nil
	}
	tc := &textCanvas{Canvas: vgsvg.New(f.width, f.height)}
	dc := draw.New(tc)
	tiles := f.layout(dc)
	for i, pn := range f.panels {
		pn.p.Draw(tiles[i][0])
	}
	return tc.boxes
}

// textCanvas records the strings drawn on a canvas, following its
// translations and rotations.
type textCanvas struct {
	*vgsvg.Canvas
	dx, dy  vg.Length
	rotated bool
	stack   []textState
	boxes   []TextBox
}

type textState struct {
	dx, dy  vg.Length
	rotated bool
}

func (c *textCanvas) Push() {
	c.stack = append(c.stack, textState{c.dx, c.dy, c.rotated})
	c.Canvas.Push()
}

func (c *textCanvas) Pop() {
	if n := len(c.stack); n > 0 {
		s := c.stack[n-1]
		c.stack = c.stack[:n-1]
		c.dx, c.dy, c.rotated = s.dx, s.dy, s.rotated
	}
	c.Canvas.Pop()
}

func (c *textCanvas) Translate(pt vg.Point) {
	if !c.rotated {
		c.dx += pt.X
		c.dy += pt.Y
	}
	c.Canvas.Translate(pt)
}

func (c *textCanvas) Rotate(rad float64) {
	if rad != 0 {
		c.rotated = true
	}
	c.Canvas.Rotate(rad)
}

func (c *textCanvas) FillString(f font.Face, pt vg.Point, s string) {
	if !c.rotated && s != "" {
		e := f.Extents()
		x, y := pt.X+c.dx, pt.Y+c.dy
		c.boxes = append(c.boxes, TextBox{Text: s, Min: vg.Point{X: x, Y: y - e.Descent}, Max: vg.Point{X: x + f.Width(s), Y: y + e.Ascent}})
	}
	c.Canvas.FillString(f, pt, s)
}
