package report

import (
	"bytes"
	"fmt"
	"html/template"
	"image/color"
	"strings"
)

// Panel is one run laid out in the pieces a page redraws after every
// change (the what-if page of `wearplan serve`): the same summary, tables
// and charts as the HTML report, each as an HTML fragment to place in a
// page that links Stylesheet. Element ids start with the id given.
type Panel struct {
	Summary  template.HTML
	Warnings []string
	// LOS is the level-of-service table; Targets, Spend and Work are empty
	// when the run has none.
	LOS, Targets, Spend, Work template.HTML
	// Charts are the network condition chart, one chart per class, and
	// the spend chart (plans only), in that order.
	Charts []Figure
}

// Figure is one chart as an HTML figure with its caption.
type Figure struct {
	ID, Title string
	HTML      template.HTML
}

// RunPanel lays out one run as a Panel.
func RunPanel(id string, run Run) (*Panel, error) {
	if run.Result == nil || len(run.Result.Initial.Classes) == 0 {
		return nil, fmt.Errorf("report: nothing to lay out")
	}
	rv, err := buildRun(id, run, true)
	if err != nil {
		return nil, err
	}
	p := &Panel{Warnings: rv.Warnings}
	exec := func(name string, data any) (template.HTML, error) {
		var b bytes.Buffer
		if err := htmlTemplate().ExecuteTemplate(&b, name, data); err != nil {
			return "", err
		}
		return template.HTML(b.String()), nil
	}
	if p.Summary, err = exec("facts", rv.Summary); err != nil {
		return nil, err
	}
	if p.LOS, err = exec("table", rv.LOS); err != nil {
		return nil, err
	}
	for _, t := range []struct {
		src *table
		dst *template.HTML
	}{{rv.Targets, &p.Targets}, {rv.Spend, &p.Spend}, {rv.Work, &p.Work}} {
		if t.src == nil {
			continue
		}
		if *t.dst, err = exec("table", t.src); err != nil {
			return nil, err
		}
	}
	if rv.Confidence != nil {
		// The what-if page shows the confidence table under the targets.
		h, err := exec("table", rv.Confidence)
		if err != nil {
			return nil, err
		}
		p.Targets += h
	}
	for _, c := range rv.Charts {
		h, err := exec("chart", c)
		if err != nil {
			return nil, err
		}
		p.Charts = append(p.Charts, Figure{ID: c.ID, Title: c.Title, HTML: h})
	}
	return p, nil
}

// Stylesheet is the reports' CSS, for a page that shows report fragments.
func Stylesheet() []byte {
	css, err := templates.ReadFile("templates/report.css")
	if err != nil {
		panic(err) // embedded at build time
	}
	return css
}

// Colours are the reports' colours as CSS hex values: Ink for text and
// rules, Spend for spend bars, Grid for light rules, and the three-step
// condition ramp Good, Fair, Poor of the network chart with a text colour
// that reads on each (OnGood, OnFair, OnPoor).
type Colours struct {
	Ink, Spend, Grid       string
	Good, Fair, Poor       string
	OnGood, OnFair, OnPoor string
}

// Palette returns the reports' colours.
func Palette() Colours {
	hex := func(c color.RGBA) string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }
	r := conditionRamp(3)
	return Colours{Ink: hex(ink), Spend: hex(spendInk()), Grid: hex(gridInk),
		Good: hex(r[0]), Fair: hex(r[1]), Poor: hex(r[2]),
		OnGood: hex(inkOn(r[0])), OnFair: hex(inkOn(r[1])), OnPoor: hex(inkOn(r[2]))}
}

// PaletteCSS declares the reports' colours as CSS custom properties, so
// that a page around report fragments uses the same ones: --ink, --spend,
// --grid, --good, --fair, --poor, --on-good, --on-fair, --on-poor.
func PaletteCSS() string {
	c := Palette()
	var b strings.Builder
	b.WriteString(":root {")
	for _, v := range []struct{ name, hex string }{
		{"ink", c.Ink}, {"spend", c.Spend}, {"grid", c.Grid}, {"good", c.Good}, {"fair", c.Fair}, {"poor", c.Poor},
		{"on-good", c.OnGood}, {"on-fair", c.OnFair}, {"on-poor", c.OnPoor},
	} {
		fmt.Fprintf(&b, " --%s: %s;", v.name, v.hex)
	}
	b.WriteString(" }\n")
	return b.String()
}
