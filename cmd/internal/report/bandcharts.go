package report

import (
	"fmt"
	"html/template"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

	"wearplan/cmd/internal/render"
	"wearplan/scenarios"
)

// Band charts: for the network and each class, the poor share (top panel)
// and the good share (bottom panel) over the years, each with the plan's
// line, the median of the simulated runs as a dashed line, and the range
// from the 5th to the 95th percentile of the runs as a shaded band. The
// functions take a scenarios.SimulationResult and nothing else, so that any
// page showing a simulation (the report, the what-if page) draws the same
// charts.

// bandChartH is the height of a band chart: two panels on one year axis.
const bandChartH = 340

// bandCharts draws the network's band chart and one per class, with the
// ids ID-chart-bands-network and ID-chart-bands-class-K (K from 1).
func bandCharts(id string, sim *scenarios.SimulationResult) ([]chart, error) {
	ch, err := networkBandChart(id+"-chart-bands-network", sim)
	if err != nil {
		return nil, err
	}
	out := []chart{ch}
	for k := range sim.Classes {
		ch, err := classBandChart(fmt.Sprintf("%s-chart-bands-class-%d", id, k+1), sim, k)
		if err != nil {
			return nil, err
		}
		out = append(out, ch)
	}
	return out, nil
}

// networkBandChart draws the network's poor and good shares with their
// bands.
func networkBandChart(id string, sim *scenarios.SimulationResult) (chart, error) {
	bands := make([]scenarios.ShareBands, len(sim.Years))
	for t, y := range sim.Years {
		bands[t] = y.Network.Shares
	}
	caption := fmt.Sprintf("Share of the network (classes weighted by %s) in poor condition (top) and good condition (bottom) today and at the end of each year. %s",
		sim.Weighting, bandWords(sim))
	return shareBandChart(id, "How sure: network poor and good shares", caption, "of network", sim, sim.Initial.Network.Shares, bands)
}

// classBandChart draws class k's poor and good shares with their bands.
func classBandChart(id string, sim *scenarios.SimulationResult, k int) (chart, error) {
	if k < 0 || k >= len(sim.Classes) || k >= len(sim.Initial.Classes) {
		return chart{}, fmt.Errorf("band chart: no class %d in the simulation", k+1)
	}
	info := sim.Classes[k]
	bands := make([]scenarios.ShareBands, len(sim.Years))
	for t, y := range sim.Years {
		if k >= len(y.Classes) || y.Classes[k].Class != info.Class {
			return chart{}, fmt.Errorf("band chart: year %d has no bands for class %q", y.Year, info.Class)
		}
		bands[t] = y.Classes[k].Shares
	}
	caption := fmt.Sprintf("Share of %s (by %s) in poor condition (top) and good condition (bottom) today and at the end of each year. %s",
		info.Class, quantityWord(info.Unit), bandWords(sim))
	return shareBandChart(id, "How sure: "+info.Class+" poor and good shares", caption, "by "+quantityWord(info.Unit), sim, sim.Initial.Classes[k].Shares, bands)
}

// quantityWord names what a class's shares are shares of: its unit
// (lane-km, m2), or "count" for classes counted in units of "each".
func quantityWord(unit string) string {
	if unit == "" || strings.EqualFold(unit, "each") {
		return "count"
	}
	return unit
}

// bandWords is the part of a band chart's caption that says what the lines
// and the band are.
func bandWords(sim *scenarios.SimulationResult) string {
	return fmt.Sprintf("Solid line with points: the plan. Dashed line: the median of %s simulated runs. Shaded, hatched band: from the 5th to the 95th percentile of the runs (today's condition is known, so the band starts at a point). Sources of uncertainty included: %s.",
		render.Money(float64(sim.Runs)), includedShort(sim))
}

// includedShort names the sources of uncertainty in the bands briefly; the
// report's bands section says them in full.
func includedShort(sim *scenarios.SimulationResult) string {
	s := "piece-level randomness"
	if m := sim.Uncertainty.Matrix; m != "" && m != scenarios.MatrixNone {
		s += " and matrix uncertainty (" + m + ")"
	} else {
		s += " only (matrices as given)"
	}
	return s
}

// bandLegendText is the band's legend entry, on two lines to fit the
// legend column.
func bandLegendText(runs int) string {
	return "5th-95th percentile\nof " + render.Money(float64(runs)) + " simulated runs"
}

// shareBandChart draws two panels on one year axis: the poor share on top,
// the good share below, each with the plan, the median and the band.
// today is the known condition at x = 0; bands has one entry per year; the
// y axes read "Poor (% " + of + ")".
func shareBandChart(id, title, caption, of string, sim *scenarios.SimulationResult, today scenarios.Shares, bands []scenarios.ShareBands) (chart, error) {
	if len(bands) == 0 {
		return chart{}, fmt.Errorf("band chart %s: no years", id)
	}
	poor := func(s scenarios.ShareBands) scenarios.Band { return s.Poor }
	good := func(s scenarios.ShareBands) scenarios.Band { return s.Good }
	top, err := bandPanel("Poor", of, sim.StartYear, today.Poor, bands, poor, false)
	if err != nil {
		return chart{}, err
	}
	bottom, err := bandPanel("Good", of, sim.StartYear, today.Good, bands, good, true)
	if err != nil {
		return chart{}, err
	}
	l := newLegend()
	plan, median := bandLines()
	l.Add("Plan", plan...)
	l.Add("Median of runs", median)
	l.Add(bandLegendText(sim.Runs), &shadedBand{})
	svg, err := drawPanelsSVG([]*plot.Plot{top, bottom}, &l, title)
	return chart{ID: id, Title: title, Caption: caption, SVG: svg}, err
}

// bandLines returns the styles of the plan's line (with its points) and of
// the median, for the panels and the legend.
func bandLines() ([]plot.Thumbnailer, *plotter.Line) {
	plan := &plotter.Line{LineStyle: draw.LineStyle{Color: ink, Width: 1.2}}
	pts := &plotter.Scatter{GlyphStyle: draw.GlyphStyle{Color: ink, Radius: 1.8, Shape: draw.CircleGlyph{}}}
	median := &plotter.Line{LineStyle: draw.LineStyle{Color: ink, Width: 1, Dashes: []vg.Length{4, 2.5}}}
	return []plot.Thumbnailer{plan, pts}, median
}

// bandPanel is one panel of a band chart: the band, the median and the
// plan of one group's share, in percent.
func bandPanel(group, of string, firstYear int, today float64, bands []scenarios.ShareBands, get func(scenarios.ShareBands) scenarios.Band, xLabel bool) (*plot.Plot, error) {
	xs, lo, mid, hi, plan := bandSeries(today, bands, get)
	n := len(xs)
	x := ""
	if xLabel {
		x = "End of year"
	}
	p := newPlot(x, fmt.Sprintf("%s (%% %s)", group, of))
	p.X.Tick.Marker = yearAxis{firstYear: firstYear, today: "today"}
	p.X.Min, p.X.Max = 0, float64(n-1)
	p.Y.Min, p.Y.Max = paddedRange(0, 100, lo, hi, mid, plan)
	p.Y.Tick.Marker = percentTicks{}
	grid := plotter.NewGrid()
	grid.Vertical.Color = nil
	grid.Horizontal.Color, grid.Horizontal.Width = gridInk, 0.3
	p.Add(grid)
	p.Add(&shadedBand{xs: xs, lo: lo, hi: hi})
	planLine, medianLine := bandLines()
	xy := func(ys []float64) plotter.XYs {
		out := make(plotter.XYs, n)
		for i := range out {
			out[i] = plotter.XY{X: xs[i], Y: ys[i]}
		}
		return out
	}
	ml := medianLine
	ml.XYs = xy(mid)
	pl := planLine[0].(*plotter.Line)
	pl.XYs = xy(plan)
	pp := planLine[1].(*plotter.Scatter)
	pp.XYs = xy(plan)
	p.Add(ml, pl, pp)
	return p, nil
}

// bandSeries returns a panel's points in percent: x = 0 is today, when the
// condition is known (every series starts at today's share), and x = t the
// end of plan year t, with the 5th percentile, median, 95th percentile and
// plan of the group's share.
func bandSeries(today float64, bands []scenarios.ShareBands, get func(scenarios.ShareBands) scenarios.Band) (xs, lo, mid, hi, plan []float64) {
	n := len(bands) + 1
	xs = make([]float64, n)
	lo, mid, hi, plan = make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	lo[0], mid[0], hi[0], plan[0] = 100*today, 100*today, 100*today, 100*today
	for t, b := range bands {
		v := get(b)
		xs[t+1] = float64(t + 1)
		lo[t+1], mid[t+1], hi[t+1], plan[t+1] = 100*v.P5, 100*v.P50, 100*v.P95, 100*v.Plan
	}
	return xs, lo, mid, hi, plan
}

// percentTicks labels a percent axis with whole or half percentages at a
// round step that gives four to eight labels.
type percentTicks struct{}

func (percentTicks) Ticks(lo, hi float64) []plot.Tick {
	span := hi - lo
	step := 0.5
	for _, s := range []float64{0.5, 1, 2, 5, 10, 20, 25} {
		step = s
		if span/s <= 8 {
			break
		}
	}
	var ticks []plot.Tick
	for v := math.Ceil(lo/step) * step; v <= hi+1e-9; v += step {
		ticks = append(ticks, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', -1, 64)})
	}
	return ticks
}

// shadedBand fills the range between two lines lightly, hatches it, and
// draws its edges thinly, so that it reads in greyscale and where a printer
// drops light fills. Its legend thumbnail is a hatched, edged swatch.
type shadedBand struct {
	xs, lo, hi []float64
}

func (b *shadedBand) DataRange() (xmin, xmax, ymin, ymax float64) {
	ymin, ymax = math.Inf(1), math.Inf(-1)
	for i := range b.xs {
		ymin, ymax = math.Min(ymin, b.lo[i]), math.Max(ymax, b.hi[i])
	}
	return b.xs[0], b.xs[len(b.xs)-1], ymin, ymax
}

func bandEdgeLine() draw.LineStyle { return draw.LineStyle{Color: bandEdge(), Width: 0.5} }

func (b *shadedBand) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	lo, hi := make([]vg.Point, len(b.xs)), make([]vg.Point, len(b.xs))
	for i, x := range b.xs {
		lo[i] = vg.Point{X: trX(x), Y: trY(b.lo[i])}
		hi[i] = vg.Point{X: trX(x), Y: trY(b.hi[i])}
	}
	b.draw(&c, lo, hi)
}

func (b *shadedBand) draw(c *draw.Canvas, lo, hi []vg.Point) {
	poly := append([]vg.Point(nil), hi...)
	for i := len(lo) - 1; i >= 0; i-- {
		poly = append(poly, lo[i])
	}
	c.FillPolygon(bandFill(), c.ClipPolygonXY(poly))
	if lines := hatchLines(lo, hi, hatchSpacing); len(lines) > 0 {
		c.StrokeLines(bandEdgeLine(), c.ClipLinesXY(lines...)...)
	}
	c.StrokeLines(bandEdgeLine(), c.ClipLinesXY(lo)...)
	c.StrokeLines(bandEdgeLine(), c.ClipLinesXY(hi)...)
}

func (b *shadedBand) Thumbnail(c *draw.Canvas) {
	mid := (c.Min.Y + c.Max.Y) / 2
	r := c.Rectangle
	r.Min.Y, r.Max.Y = mid-5, mid+5
	b.draw(c, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}}, []vg.Point{{X: r.Min.X, Y: r.Max.Y}, r.Max})
}

// drawPanelsSVG draws plots one above the other, aligned on a shared x
// range, with the legend on the right, as inline SVG like drawSVG.
func drawPanelsSVG(ps []*plot.Plot, legend *plot.Legend, label string) (svg template.HTML, err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("drawing chart %q: %v", label, r)
		}
	}()
	c := vgsvg.NewWith(vgsvg.UseWH(chartW, bandChartH))
	dc := draw.New(c)
	area := dc
	area.Max.X -= legendW
	la := dc
	la.Min.X = dc.Max.X - legendW + 10
	la.Max.Y -= 8
	legend.Draw(la)
	rows := make([][]*plot.Plot, len(ps))
	for i, p := range ps {
		rows[i] = []*plot.Plot{p}
	}
	tiles := draw.Tiles{Rows: len(ps), Cols: 1, PadY: 10}
	for i, cs := range plot.Align(rows, tiles, area) {
		ps[i].Draw(cs[0])
	}
	return inlineSVG(c, label)
}
