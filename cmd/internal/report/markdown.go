package report

import (
	"bufio"
	"io"
	"strings"
)

// Markdown writes the report's content as Markdown (GitHub-flavoured
// tables) for pasting into documents. It holds everything the HTML report
// holds except the charts, which it points to.
func Markdown(w io.Writer, rep *Report) error {
	d, err := build(rep, false)
	if err != nil {
		return err
	}
	m := &mdWriter{w: bufio.NewWriter(w)}
	m.line("# ", mdText(d.Title))
	m.blank()
	m.line(mdText(d.Subtitle))
	m.blank()
	m.line("Report date ", rep.Details.Date, ", wearplan ", mdText(rep.Details.Version))
	m.blank()
	m.line("> **", mdText(d.Caution), "**")
	m.blank()
	if sv := d.Summary; sv != nil {
		m.line("## Summary")
		m.blank()
		m.line("**", mdText(sv.Headline), "**")
		m.blank()
		m.line(mdText(sv.Gap))
		m.blank()
		m.facts(sv.Facts)
		for _, warn := range sv.Warnings {
			m.line("Note: ", mdText(warn))
			m.blank()
		}
		m.table(sv.LOS)
	}
	if c := d.Compare; c != nil {
		m.line("## Comparison")
		m.blank()
		m.table(c.Overview)
		m.table(c.LOS)
		m.table(c.Spend)
	}
	for _, r := range d.Runs {
		m.line("## ", mdText(r.Name))
		m.blank()
		if r.Description != "" {
			m.line(mdText(r.Description))
			m.blank()
		}
		m.line("**", mdText(r.Headline), "**")
		m.blank()
		m.facts(r.Summary)
		for _, warn := range r.Warnings {
			m.line("Note: ", mdText(warn))
			m.blank()
		}
		if len(r.ClassWarnings) > 0 {
			m.line("### What the plan does to each class")
			m.blank()
			for _, warn := range r.ClassWarnings {
				m.line("Warning: ", mdText(warn))
				m.blank()
			}
		}
		m.line("### Level of service")
		m.blank()
		m.table(r.LOS)
		if r.Bands != nil {
			m.line("Charts of condition by year, of the poor and good shares with their 5th-95th percentile bands, and of spend against budget are in the HTML report (`wearplan report --format html --bands`).")
		} else {
			m.line("Charts of condition by year and of spend against budget are in the HTML report (`wearplan report --format html`).")
		}
		m.blank()
		if r.Targets != nil {
			m.line("### Targets")
			m.blank()
			m.table(*r.Targets)
		}
		if f := r.Funding; f != nil {
			m.line("### Funding")
			m.blank()
			m.line(mdText(f.Gap))
			m.blank()
			m.list(f.Missed)
			m.list(f.Words)
			if f.Extra != nil {
				m.table(*f.Extra)
			}
			if f.Targets != nil {
				m.table(*f.Targets)
			}
		}
		if r.Confidence != nil {
			m.line("### Targets with a confidence")
			m.blank()
			m.table(*r.Confidence)
		}
		if b := r.Bands; b != nil {
			m.line("### How sure the forecast is")
			m.blank()
			m.facts(b.Facts)
			m.line("Included in the bands:")
			m.blank()
			for _, s := range b.Included {
				m.line("- ", mdText(s))
			}
			m.blank()
			m.line("Not included:")
			m.blank()
			for _, s := range b.Excluded {
				m.line("- ", mdText(s))
			}
			m.blank()
			if b.Chances != nil {
				m.table(*b.Chances)
			}
			m.table(b.Classes)
			m.facts(b.Method)
			for _, n := range b.Notes {
				m.line("Note: ", mdText(n))
				m.blank()
			}
			m.line("> **", mdText(b.Caution), "**")
			m.blank()
		}
		if r.Spend != nil {
			m.line("### Spend against budget")
			m.blank()
			m.table(*r.Spend)
		}
		if r.ClassSpend != nil {
			m.line("### Spend by class and budget group")
			m.blank()
			m.line("The chart of spend stacked by class against the cap is in the HTML report.")
			m.blank()
			m.table(*r.ClassSpend)
			if r.GroupSpend != nil {
				m.table(*r.GroupSpend)
			}
		}
		if r.Work != nil {
			m.line("### Work program")
			m.blank()
			m.table(*r.Work)
		}
		if in := r.Indicators; in != nil {
			m.line("### Asset management plan indicators")
			m.blank()
			m.line(mdText(in.Intro))
			m.blank()
			m.table(in.Ratios)
			m.table(in.Value)
			m.table(in.Renewal)
			m.table(in.Life)
			for _, n := range in.Notes {
				m.line("Note: ", mdText(n))
				m.blank()
			}
			m.line("#### What the indicators mean and where they come from")
			m.blank()
			m.facts(in.Definitions)
		}
	}
	if s := d.Sweep; s != nil {
		m.line("## Condition score against budget")
		m.blank()
		m.line("The chart, with the scenario's budget and the least level budgets marked, is in the HTML report.")
		m.blank()
		m.facts(s.Facts)
		for _, n := range s.Notes {
			m.line("Note: ", mdText(n))
			m.blank()
		}
		m.table(s.Table)
	}
	if len(d.Assumptions) > 0 {
		m.line("## Assumptions")
		m.blank()
	}
	for _, r := range d.Assumptions {
		a := r.Assumptions
		if len(d.Assumptions) > 1 {
			m.line("### ", mdText(r.Name))
			m.blank()
		}
		m.facts(a.General)
		if len(a.Targets) > 0 {
			m.line("Targets:")
			m.blank()
			m.list(a.Targets)
		}
		m.table(a.Weights)
		for _, c := range a.Classes {
			m.line("#### ", mdText(c.Heading))
			m.blank()
			m.table(c.Scale)
			m.table(c.Matrix)
			m.table(c.Treatments)
		}
	}
	m.line("## Run details")
	m.blank()
	m.facts(d.Details.Facts)
	m.table(d.Details.Inputs)
	m.line("The same files, wearplan version and report date give the same report, byte for byte.")
	return m.flush()
}

type mdWriter struct {
	w   *bufio.Writer
	err error
}

func (m *mdWriter) line(parts ...string) {
	for _, p := range parts {
		if m.err == nil {
			_, m.err = m.w.WriteString(p)
		}
	}
	if m.err == nil {
		m.err = m.w.WriteByte('\n')
	}
}

func (m *mdWriter) blank() { m.line() }

func (m *mdWriter) flush() error {
	if m.err != nil {
		return m.err
	}
	return m.w.Flush()
}

// list writes a bulleted list and a blank line (nothing for no items).
func (m *mdWriter) list(items []string) {
	if len(items) == 0 {
		return
	}
	for _, s := range items {
		m.line("- ", mdText(s))
	}
	m.blank()
}

func (m *mdWriter) facts(fs []fact) {
	for _, f := range fs {
		m.line("- **", mdText(f.Label), ":** ", mdText(f.Value))
	}
	m.blank()
}

// table writes a caption line, a pipe table, and the note. Group rows are
// written in bold in the first column.
func (m *mdWriter) table(t table) {
	m.line("**", mdText(t.Caption), "**")
	m.blank()
	cells := make([]string, len(t.Head))
	for i, h := range t.Head {
		cells[i] = mdText(h)
	}
	m.line("| ", strings.Join(cells, " | "), " |")
	for i := range t.Head {
		cells[i] = "---"
		if t.Num[i] {
			cells[i] = "---:"
		}
	}
	m.line("| ", strings.Join(cells, " | "), " |")
	for _, r := range t.Rows {
		for i := range cells {
			cells[i] = ""
			if i < len(r.Cells) {
				cells[i] = mdText(r.Cells[i])
			}
		}
		if r.Group {
			cells[0] = "**" + cells[0] + "**"
		}
		m.line("| ", strings.Join(cells, " | "), " |")
	}
	m.blank()
	if t.Note != "" {
		m.line(mdText(t.Note))
		m.blank()
	}
}

// mdText escapes the characters that Markdown would read as markup (and
// the pipe, which ends a table cell) and keeps text on one line.
func mdText(s string) string {
	var b strings.Builder
	for _, r := range strings.Join(strings.Fields(s), " ") {
		if strings.ContainsRune("\\`*_[]<>|#", r) {
			b.WriteByte('\\')
		}
		b.WriteRune(r)
	}
	return b.String()
}
