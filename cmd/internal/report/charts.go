package report

import (
	"bytes"
	"fmt"
	"html"
	"html/template"
	"image/color"
	"math"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// chart is one figure of the HTML report: inline SVG with a title and a
// plain-words description for screen readers and the figure caption.
type chart struct {
	ID      string
	Title   string
	Caption string
	SVG     template.HTML
}

// Chart geometry in points.
const (
	chartW  = 500
	chartH  = 250
	legendW = 140
)

// sans is Liberation Sans (embedded in gonum/plot for measuring text),
// which has the metrics of Arial and Helvetica; the SVG names those as
// fallbacks so labels keep their width where Liberation is not installed.
func sans(size vg.Length) font.Font {
	return font.From(font.Font{Typeface: "Liberation", Variant: "Sans"}, size)
}

func textStyle(size vg.Length) text.Style {
	return text.Style{Color: ink, Font: sans(size), XAlign: draw.XLeft, YAlign: draw.YBottom, Handler: plot.DefaultTextHandler}
}

// newPlot returns a plot with the report's fonts and no title (the HTML
// figure has one).
func newPlot(xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		ax.Label.TextStyle.Font = sans(9)
		ax.Label.TextStyle.Color = ink
		ax.Tick.Label.Font = sans(8)
		ax.Tick.Label.Color = ink
		ax.LineStyle.Color = ink
		ax.Tick.LineStyle.Color = ink
	}
	p.X.Label.Text, p.Y.Label.Text = xLabel, yLabel
	p.Legend.TextStyle.Font = sans(8)
	p.Legend.TextStyle.Color = ink
	return p
}

// newLegend returns a legend in the report's style, entries top to bottom.
func newLegend() plot.Legend {
	l := plot.NewLegend()
	l.TextStyle.Font = sans(8)
	l.TextStyle.Color = ink
	l.Top, l.Left = true, true
	l.ThumbnailWidth = 16
	l.Padding = 3
	return l
}

// drawSVG draws a plot and its legend (on the right) into SVG for inlining
// in HTML: no XML prologue, fonts with fallbacks, a role and a label.
func drawSVG(p *plot.Plot, legend *plot.Legend, label string) (svg template.HTML, err error) {
	defer func() {
		// gonum/plot reports some drawing problems by panicking.
		if r := recover(); r != nil {
			err = fmt.Errorf("drawing chart %q: %v", label, r)
		}
	}()
	c := vgsvg.NewWith(vgsvg.UseWH(chartW, chartH))
	dc := draw.New(c)
	plotArea := dc
	if legend != nil {
		plotArea.Max.X -= legendW
		la := dc
		la.Min.X = dc.Max.X - legendW + 10
		la.Max.Y -= 8
		legend.Draw(la)
	}
	p.Draw(plotArea)
	return inlineSVG(c, label)
}

// inlineSVG writes a drawn canvas as SVG for inlining in HTML: no XML
// prologue, fonts with fallbacks, a role and a label.
func inlineSVG(c *vgsvg.Canvas, label string) (template.HTML, error) {
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return "", err
	}
	s := buf.String()
	if i := strings.Index(s, "<svg"); i >= 0 {
		s = s[i:] // drop the XML prologue and generator comment
	}
	s = strings.ReplaceAll(s, "font-family:Liberation Sans;", "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;")
	s = strings.Replace(s, "<svg ", `<svg role="img" aria-label="`+html.EscapeString(label)+`" `, 1)
	return template.HTML(s), nil
}

// yearAxis labels x = 0 as today (when today is set) and x = t as the
// calendar year whose end it is, every step years, with a minor tick on
// every year.
type yearAxis struct {
	firstYear int // calendar year of x = 1
	today     string
}

func (a yearAxis) Ticks(lo, hi float64) []plot.Tick {
	n := int(math.Round(hi - lo))
	step := 1
	switch {
	case n > 25:
		step = 5
	case n > 10:
		step = 2
	}
	var ticks []plot.Tick
	for x := int(math.Ceil(lo)); x <= int(math.Floor(hi)); x++ {
		t := plot.Tick{Value: float64(x)}
		switch {
		case x == 0 && a.today != "":
			t.Label = a.today
		case x%step == 0 || x == int(math.Floor(hi)) && (x%step)*2 > step:
			t.Label = strconv.Itoa(a.firstYear + x - 1)
		}
		ticks = append(ticks, t)
	}
	return ticks
}

// percentAxis ticks 0-100 every 20.
func percentAxis(lo, hi float64) []plot.Tick {
	var ticks []plot.Tick
	for v := 0; v <= 100; v += 10 {
		t := plot.Tick{Value: float64(v)}
		if v%20 == 0 {
			t.Label = strconv.Itoa(v)
		}
		ticks = append(ticks, t)
	}
	return ticks
}

// band is one layer of a stacked share chart.
type band struct {
	name   string
	values []float64 // percent of the total, one per x
	fill   color.RGBA
	hatch  bool
}

// stackedShares draws bands stacked from the bottom (worst) to the top
// (best) as filled areas, hatches the marked ones, separates them with thin
// white rules, and names each band inside it where there is room.
type stackedShares struct {
	xs    []float64
	bands []band // bottom to top
	label text.Style
}

func (s *stackedShares) DataRange() (xmin, xmax, ymin, ymax float64) {
	return s.xs[0], s.xs[len(s.xs)-1], 0, 100
}

func (s *stackedShares) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	n := len(s.xs)
	lo := make([]float64, n)
	type edge struct{ lo, hi []vg.Point }
	edges := make([]edge, len(s.bands))
	for b, bd := range s.bands {
		hi := make([]float64, n)
		var top, bottom []vg.Point
		for i := range s.xs {
			hi[i] = math.Min(lo[i]+bd.values[i], 100)
			top = append(top, vg.Point{X: trX(s.xs[i]), Y: trY(hi[i])})
			bottom = append(bottom, vg.Point{X: trX(s.xs[i]), Y: trY(lo[i])})
		}
		poly := append([]vg.Point(nil), top...)
		for i := n - 1; i >= 0; i-- {
			poly = append(poly, bottom[i])
		}
		c.FillPolygon(bd.fill, c.ClipPolygonXY(poly))
		if bd.hatch {
			strokeHatch(&c, bottom, top, inkOn(bd.fill))
		}
		edges[b] = edge{bottom, top}
		lo = hi
	}
	rule := draw.LineStyle{Color: color.White, Width: 0.6}
	for b := 0; b < len(edges)-1; b++ {
		c.StrokeLines(rule, c.ClipLinesXY(edges[b].hi)...)
	}
	var placed []vg.Rectangle
	for b, bd := range s.bands {
		if r, ok := placeLabel(&c, edges[b].lo, edges[b].hi, s.label, bd.name, placed); ok {
			st := s.label
			st.Color = inkOn(bd.fill)
			c.FillText(st, r.Min, bd.name)
			placed = append(placed, r)
		}
	}
}

// placeLabel finds where a band's name fits inside the band: at the x where
// the band is thickest first, then the next thickest, checking the text box
// against the band's edges and the labels already placed.
func placeLabel(c *draw.Canvas, lo, hi []vg.Point, sty text.Style, name string, placed []vg.Rectangle) (vg.Rectangle, bool) {
	w, h := sty.Width(name), sty.Height(name)
	order := make([]int, len(lo))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool {
		return hi[order[a]].Y-lo[order[a]].Y > hi[order[b]].Y-lo[order[b]].Y
	})
	edgeAt := func(pts []vg.Point, x vg.Length) vg.Length {
		for i := 1; i < len(pts); i++ {
			if x <= pts[i].X {
				u := (x - pts[i-1].X) / (pts[i].X - pts[i-1].X)
				return pts[i-1].Y + u*(pts[i].Y-pts[i-1].Y)
			}
		}
		return pts[len(pts)-1].Y
	}
	for _, i := range order {
		if hi[i].Y-lo[i].Y < h+3 {
			break
		}
		x0 := lo[i].X - w/2
		x0 = max(x0, c.Min.X+3)
		x0 = min(x0, c.Max.X-3-w)
		mid := (lo[i].Y + hi[i].Y) / 2
		r := vg.Rectangle{Min: vg.Point{X: x0, Y: mid - h/2}, Max: vg.Point{X: x0 + w, Y: mid + h/2}}
		fits := true
		for k := 0; k <= 8 && fits; k++ {
			x := r.Min.X + vg.Length(k)/8*w
			fits = edgeAt(lo, x) <= r.Min.Y-1 && edgeAt(hi, x) >= r.Max.Y+1
		}
		for _, q := range placed {
			if fits && r.Min.X < q.Max.X && q.Min.X < r.Max.X && r.Min.Y < q.Max.Y && q.Min.Y < r.Max.Y {
				fits = false
			}
		}
		if fits {
			return r, true
		}
	}
	return vg.Rectangle{}, false
}

// hatchSpacing is the distance between hatch lines, in points.
const hatchSpacing = 4.5

// strokeHatch draws 45-degree lines inside the region between the
// piecewise-linear edges lo and hi.
func strokeHatch(c *draw.Canvas, lo, hi []vg.Point, clr color.RGBA) {
	if lines := hatchLines(lo, hi, hatchSpacing); len(lines) > 0 {
		c.StrokeLines(draw.LineStyle{Color: clr, Width: 0.5}, c.ClipLinesXY(lines...)...)
	}
}

// hatchLines returns the segments of the 45-degree lines y = x + k, spaced
// `spacing` apart, that lie inside the region between the piecewise-linear
// edges lo and hi (the same increasing x positions, lo below hi). In each x
// segment both edges and a hatch line are linear, so the part of the line
// inside the region is found exactly by solving two linear inequalities.
func hatchLines(lo, hi []vg.Point, spacing float64) [][]vg.Point {
	if len(lo) < 2 || len(lo) != len(hi) {
		return nil
	}
	minC, maxC := math.Inf(1), math.Inf(-1)
	for i := range lo {
		minC = math.Min(minC, float64(lo[i].Y-lo[i].X))
		maxC = math.Max(maxC, float64(hi[i].Y-hi[i].X))
	}
	step := spacing * math.Sqrt2 // vertical distance between 45-degree lines
	var lines [][]vg.Point
	for k := math.Floor(minC/step) * step; k <= maxC; k += step {
		for i := 1; i < len(lo); i++ {
			a, b := float64(lo[i-1].X), float64(lo[i].X)
			if b <= a {
				continue
			}
			a, b = keepAbove(a, b, float64(lo[i-1].Y), float64(lo[i].Y), k)
			a, b = keepBelow(a, b, float64(hi[i-1].X), float64(hi[i].X), float64(hi[i-1].Y), float64(hi[i].Y), k)
			if b-a > 1e-6 {
				lines = append(lines, []vg.Point{{X: vg.Length(a), Y: vg.Length(a + k)}, {X: vg.Length(b), Y: vg.Length(b + k)}})
			}
		}
	}
	return lines
}

// keepAbove narrows [a, b] to where the line y = x + k is at or above the
// edge running linearly from (a, ya) to (b, yb).
func keepAbove(a, b, ya, yb, k float64) (float64, float64) {
	// g(x) = x + k - edge(x) >= 0, linear in x.
	ga, gb := a+k-ya, b+k-yb
	return clipLinear(a, b, ga, gb)
}

// keepBelow narrows [a, b] to where the line is at or below the edge
// running linearly from (xa, ya) to (xb, yb); a and b lie within [xa, xb].
func keepBelow(a, b, xa, xb, ya, yb, k float64) (float64, float64) {
	if b <= a {
		return a, b
	}
	at := func(x float64) float64 { return ya + (x-xa)/(xb-xa)*(yb-ya) }
	ga, gb := at(a)-(a+k), at(b)-(b+k)
	return clipLinear(a, b, ga, gb)
}

// clipLinear returns the part of [a, b] where the linear function with
// values ga at a and gb at b is non-negative (an empty interval has b <= a).
func clipLinear(a, b, ga, gb float64) (float64, float64) {
	switch {
	case ga >= 0 && gb >= 0:
		return a, b
	case ga < 0 && gb < 0:
		return b, b
	}
	x := a + (b-a)*ga/(ga-gb)
	if ga >= 0 {
		return a, x
	}
	return x, b
}

// swatch is a legend thumbnail: the band's fill, its hatch, a thin outline.
type swatch struct {
	fill  color.RGBA
	hatch bool
}

func (s swatch) Thumbnail(c *draw.Canvas) {
	r := c.Rectangle
	r.Min.Y += 1
	r.Max.Y -= 1
	pts := []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}}
	c.FillPolygon(s.fill, pts)
	if s.hatch {
		strokeHatch(c, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}}, []vg.Point{{X: r.Min.X, Y: r.Max.Y}, r.Max}, inkOn(s.fill))
	}
	c.StrokeLines(draw.LineStyle{Color: ink, Width: 0.4}, append(pts, r.Min))
}

// sharesChart draws condition shares over the years as stacked areas.
// bands are given best first (the legend order) and drawn with the best
// on top.
func sharesChart(id, title, caption, yLabel string, firstYear int, bands []band) (chart, error) {
	p := newPlot("End of year", yLabel)
	p.X.Tick.Marker = yearAxis{firstYear: firstYear, today: "today"}
	p.Y.Tick.Marker = plot.TickerFunc(percentAxis)
	p.Y.Min, p.Y.Max = 0, 100
	n := len(bands[0].values)
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = float64(i)
	}
	s := &stackedShares{xs: xs, label: textStyle(7.5)}
	for i := len(bands) - 1; i >= 0; i-- {
		s.bands = append(s.bands, bands[i])
	}
	p.Add(s)
	l := newLegend()
	for _, b := range bands {
		l.Add(b.name, swatch{fill: b.fill, hatch: b.hatch})
	}
	svg, err := drawSVG(p, &l, title)
	return chart{ID: id, Title: title, Caption: caption, SVG: svg}, err
}

// moneyScale picks the unit money axes are drawn in.
func moneyScale(largest float64) (float64, string) {
	switch {
	case largest >= 1e9:
		return 1e9, "billion "
	case largest >= 1e6:
		return 1e6, "million "
	case largest >= 1e4:
		return 1e3, "thousand "
	}
	return 1, ""
}

// budgetMarks draws each year's budget cap as a short heavy rule across the
// year's bar.
type budgetMarks struct {
	xs, ys []float64 // NaN for a year without a cap
}

func (b budgetMarks) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax, ymin, ymax = math.Inf(1), math.Inf(-1), 0, 0
	for i, x := range b.xs {
		xmin, xmax = math.Min(xmin, x-0.5), math.Max(xmax, x+0.5)
		if !math.IsNaN(b.ys[i]) {
			ymax = math.Max(ymax, b.ys[i])
		}
	}
	return
}

var budgetLine = draw.LineStyle{Color: ink, Width: 1.8}

func (b budgetMarks) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	for i, x := range b.xs {
		if math.IsNaN(b.ys[i]) {
			continue
		}
		y := trY(b.ys[i])
		c.StrokeLines(budgetLine, c.ClipLinesXY([]vg.Point{{X: trX(x - 0.45), Y: y}, {X: trX(x + 0.45), Y: y}})...)
	}
}

func (budgetMarks) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	c.StrokeLine2(budgetLine, c.Min.X, y, c.Max.X, y)
}

// spendChart draws each year's spend as a bar and its budget cap as a rule.
func spendChart(id, title, caption, currency string, firstYear int, spend []float64, budget []*float64) (chart, error) {
	largest := 0.0
	for i, s := range spend {
		largest = math.Max(largest, s)
		if budget[i] != nil {
			largest = math.Max(largest, *budget[i])
		}
	}
	div, word := moneyScale(largest)
	p := newPlot("Year", fmt.Sprintf("%s%s a year", word, currency))
	p.X.Tick.Marker = yearAxis{firstYear: firstYear}
	p.Y.Min, p.Y.Max = 0, math.Max(1.12*largest/div, 1) // room above the highest cap
	vals := make(plotter.Values, len(spend))
	marks := budgetMarks{xs: make([]float64, len(spend)), ys: make([]float64, len(spend))}
	for i, s := range spend {
		vals[i] = s / div
		marks.xs[i] = float64(i + 1)
		marks.ys[i] = math.NaN()
		if budget[i] != nil {
			marks.ys[i] = *budget[i] / div
		}
	}
	barW := vg.Length(chartW-legendW-70) / vg.Length(len(spend)+1) * 0.7
	bars, err := plotter.NewBarChart(vals, barW)
	if err != nil {
		return chart{}, err
	}
	bars.XMin = 1
	bars.Color = spendInk()
	bars.LineStyle.Width = 0
	p.Add(bars, marks)
	p.X.Min, p.X.Max = 0.4, float64(len(spend))+0.6
	l := newLegend()
	l.Add("Spend", bars)
	l.Add("Budget cap", marks)
	svg, err := drawSVG(p, &l, title)
	return chart{ID: id, Title: title, Caption: caption, SVG: svg}, err
}

// series is one line of a line chart.
type series struct {
	name   string
	xs, ys []float64
}

// Line styles for several series: all near-black, told apart by dash
// pattern and point shape, so they survive greyscale printing.
var (
	seriesDashes = [][]vg.Length{nil, {6, 3}, {1.5, 2.5}, {7, 2, 1.5, 2}, {3, 3}}
	seriesShapes = []draw.GlyphDrawer{draw.CircleGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{}, draw.CrossGlyph{}, draw.RingGlyph{}}
)

// mark is a vertical rule at x with its name, for budgets marked on a
// chart whose x axis is money.
type mark struct {
	name string
	x    float64
}

// markDashes tell the marks apart from each other and from the series.
var markDashes = [][]vg.Length{{4, 2}, {1, 2}, {8, 2, 2, 2}}

// lineChart draws series as lines with point markers, and marks as
// vertical rules, with the legend under the plot so that long names
// (scenario names) are not cut off.
func lineChart(id, title, caption, xLabel, yLabel string, xTicks plot.Ticker, yMin, yMax float64, ss []series, marks ...mark) (chart, error) {
	p := newPlot(xLabel, yLabel)
	if xTicks != nil {
		p.X.Tick.Marker = xTicks
	}
	p.Y.Min, p.Y.Max = yMin, yMax
	l := newLegend()
	l.Left, l.Top = true, true
	width := vg.Length(chartW - 40)
	for i, s := range ss {
		xys := make(plotter.XYs, len(s.xs))
		for j := range s.xs {
			xys[j] = plotter.XY{X: s.xs[j], Y: s.ys[j]}
		}
		line, pts, err := plotter.NewLinePoints(xys)
		if err != nil {
			return chart{}, err
		}
		line.Color = ink
		line.Width = 1.2
		line.Dashes = seriesDashes[i%len(seriesDashes)]
		pts.Color = ink
		pts.Shape = seriesShapes[i%len(seriesShapes)]
		pts.Radius = 2.2
		p.Add(line, pts)
		l.Add(fitLabel(s.name, l.TextStyle, width), line, pts)
	}
	for i, m := range marks {
		v := vline{x: m.x, style: draw.LineStyle{Color: ink, Width: 1, Dashes: markDashes[i%len(markDashes)]}}
		p.Add(v)
		p.X.Min, p.X.Max = math.Min(p.X.Min, m.x), math.Max(p.X.Max, m.x)
		l.Add(fitLabel(m.name, l.TextStyle, width), v)
	}
	if len(marks) > 0 {
		// Keep the rules off the axes.
		pad := 0.04 * (p.X.Max - p.X.Min)
		p.X.Min, p.X.Max = p.X.Min-pad, p.X.Max+pad
	}
	svg, err := drawSVGBelow(p, &l, len(ss)+len(marks), title)
	return chart{ID: id, Title: title, Caption: caption, SVG: svg}, err
}

// paddedRange returns a y range around values, kept inside [floor, ceil].
func paddedRange(floor, ceil float64, values ...[]float64) (float64, float64) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, vs := range values {
		for _, v := range vs {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	if math.IsInf(lo, 0) {
		return floor, ceil
	}
	pad := math.Max((hi-lo)*0.1, 1)
	return math.Max(floor, math.Floor(lo-pad)), math.Min(ceil, math.Ceil(hi+pad))
}

// classRamp returns n fills for classes stacked in a bar: cool blue-greys
// whose lightness falls evenly from the first to the last, apart from the
// warm condition ramp; stackedBars hatches every other one as well, so
// neighbours differ without colour.
func classRamp(n int) []color.RGBA {
	anchors := []rampAnchor{{12, 230}, {22, 245}, {20, 265}, {16, 285}}
	out := make([]color.RGBA, n)
	for i := range out {
		f := 0.0
		if n > 1 {
			f = float64(i) / float64(n-1)
		}
		// Between 86 and 40 in lightness, where white rules and black
		// text both still show.
		pos := f * float64(len(anchors)-1)
		j := min(int(pos), len(anchors)-2)
		u := pos - float64(j)
		a, b := anchors[j], anchors[j+1]
		out[i] = lch(86-f*46, a.c+u*(b.c-a.c), a.h+u*(b.h-a.h))
	}
	return out
}

// stackedBars draws one bar per x, its layers stacked from the bottom,
// each filled with its colour, every other layer hatched, with thin white
// rules between layers.
type stackedBars struct {
	xs     []float64
	layers [][]float64 // bottom first, one value per x
	fills  []color.RGBA
	hatch  []bool
	width  float64 // in x units
}

func (s *stackedBars) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax = math.Inf(1), math.Inf(-1)
	for i, x := range s.xs {
		xmin, xmax = math.Min(xmin, x-s.width/2), math.Max(xmax, x+s.width/2)
		top := 0.0
		for _, l := range s.layers {
			top += l[i]
		}
		ymax = math.Max(ymax, top)
	}
	return xmin, xmax, 0, ymax
}

func (s *stackedBars) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	rule := draw.LineStyle{Color: color.White, Width: 0.5}
	for i, x := range s.xs {
		lo := 0.0
		x0, x1 := trX(x-s.width/2), trX(x+s.width/2)
		for b, l := range s.layers {
			hi := lo + l[i]
			if l[i] > 0 {
				y0, y1 := trY(lo), trY(hi)
				rect := []vg.Point{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}}
				c.FillPolygon(s.fills[b], c.ClipPolygonXY(rect))
				if s.hatch[b] {
					strokeHatch(&c, []vg.Point{{X: x0, Y: y0}, {X: x1, Y: y0}}, []vg.Point{{X: x0, Y: y1}, {X: x1, Y: y1}}, inkOn(s.fills[b]))
				}
				if b > 0 {
					c.StrokeLines(rule, c.ClipLinesXY([]vg.Point{{X: x0, Y: y0}, {X: x1, Y: y0}})...)
				}
			}
			lo = hi
		}
	}
}

// fitLabel shortens a legend label to at most width points, ending it
// with an ellipsis when it is cut.
func fitLabel(s string, sty text.Style, width vg.Length) string {
	if sty.Width(s) <= width {
		return s
	}
	r := []rune(s)
	for len(r) > 1 && sty.Width(string(r)+"…") > width {
		r = r[:len(r)-1]
	}
	return strings.TrimSpace(string(r)) + "…"
}

// stackedSpendChart draws each year's spend as a bar stacked by the named
// series (series k of all classes has fill ks[k] of classRamp(classes), so a
// class looks the same in every chart), with the caps (NaN for a year
// without one) as heavy rules.
func stackedSpendChart(id, title, caption, currency string, firstYear int, names []string, ks []int, classes int, values [][]float64, caps []float64, capName string) (chart, error) {
	n := len(caps)
	largest := 0.0
	for t := range n {
		sum := 0.0
		for _, v := range values {
			sum += v[t]
		}
		largest = math.Max(largest, sum)
		if !math.IsNaN(caps[t]) {
			largest = math.Max(largest, caps[t])
		}
	}
	div, word := moneyScale(largest)
	p := newPlot("Year", fmt.Sprintf("%s%s a year", word, currency))
	p.X.Tick.Marker = yearAxis{firstYear: firstYear}
	p.Y.Min, p.Y.Max = 0, math.Max(1.12*largest/div, 1)
	ramp := classRamp(classes)
	bars := &stackedBars{xs: make([]float64, n), layers: make([][]float64, len(values)), width: 0.7}
	for _, k := range ks {
		bars.fills, bars.hatch = append(bars.fills, ramp[k]), append(bars.hatch, k%2 == 1)
	}
	marks := budgetMarks{xs: make([]float64, n), ys: make([]float64, n)}
	for t := range n {
		bars.xs[t] = float64(t + 1)
		marks.xs[t] = float64(t + 1)
		marks.ys[t] = caps[t] / div
	}
	for b, v := range values {
		bars.layers[b] = make([]float64, n)
		for t := range n {
			bars.layers[b][t] = v[t] / div
		}
	}
	p.Add(bars, marks)
	p.X.Min, p.X.Max = 0.4, float64(n)+0.6
	l := newLegend()
	sty := l.TextStyle
	for b := len(names) - 1; b >= 0; b-- {
		l.Add(fitLabel(names[b], sty, legendW-30), swatch{fill: bars.fills[b], hatch: bars.hatch[b]})
	}
	hasCap := false
	for _, c := range caps {
		hasCap = hasCap || !math.IsNaN(c)
	}
	if hasCap {
		l.Add(capName, marks)
	}
	svg, err := drawSVG(p, &l, title)
	return chart{ID: id, Title: title, Caption: caption, SVG: svg}, err
}

// drawSVGBelow draws a plot with its legend under it, one entry a line
// across the full width, so that long names (scenario names, budgets
// explained in words) are not cut off; the SVG grows by the legend.
func drawSVGBelow(p *plot.Plot, legend *plot.Legend, entries int, label string) (svg template.HTML, err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("drawing chart %q: %v", label, r)
		}
	}()
	const line = 12
	extra := vg.Length(entries*line + 8)
	c := vgsvg.NewWith(vgsvg.UseWH(chartW, chartH+extra))
	dc := draw.New(c)
	plotArea := dc
	plotArea.Min.Y += extra
	la := dc
	la.Max.Y = dc.Min.Y + extra - 4
	la.Min.X += 8
	legend.Draw(la)
	p.Draw(plotArea)
	return inlineSVG(c, label)
}

// vline is a vertical rule across the plot at x, for a budget marked on a
// chart whose x axis is money. It has no data range: the chart sets its x
// axis to take in every rule.
type vline struct {
	x     float64
	style draw.LineStyle
}

func (v vline) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	x := trX(v.x)
	c.StrokeLines(v.style, c.ClipLinesXY([]vg.Point{{X: x, Y: c.Min.Y}, {X: x, Y: c.Max.Y}})...)
}

// Thumbnail draws the rule's dash across the legend entry: a short
// vertical rule would not show its pattern.
func (v vline) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	c.StrokeLine2(v.style, c.Min.X, y, c.Max.X, y)
}
