package whatif

import (
	"bytes"
	"encoding/json"
	"fmt"
	"html/template"
	"math"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"

	"wearplan/cmd/internal/render"
	"wearplan/cmd/internal/report"
	"wearplan/scenarios"
)

// planAnswer is the answer to /api/plan: the plan in plain words, the
// figures of a comparison column, and the report's pieces to show.
type planAnswer struct {
	Scenario  string           `json:"scenario"`
	Status    scenarios.Status `json:"status"`
	Objective string           `json:"objective"`
	// Headline says in one or two sentences what the plan achieves.
	Headline string `json:"headline"`
	// Shortfalls says, per target missed, by how much and when.
	Shortfalls []string `json:"shortfalls"`
	// Funding says what money would meet the targets, and what the same
	// money buys spent worst first.
	Funding  []string `json:"funding"`
	Warnings []string `json:"warnings"`
	Caution  string   `json:"caution"`
	// ClassWarnings say what the plan does to classes a council should
	// hear about, each with the class targets that would stop it (the
	// page offers to add them); their texts are not among Warnings.
	ClassWarnings []classWarningAnswer `json:"class_warnings"`
	// Figures are label and value pairs, formatted, that the page lines
	// up side by side for kept alternatives.
	Figures []figure    `json:"figures"`
	Panel   panelAnswer `json:"panel"`
}

type classWarningAnswer struct {
	Text      string                 `json:"text"`
	Suggested []scenarios.TargetSpec `json:"suggested_targets"`
}

type figure struct {
	Label string `json:"label"`
	Value string `json:"value"`
}

type panelAnswer struct {
	Summary template.HTML `json:"summary"`
	LOS     template.HTML `json:"los"`
	Targets template.HTML `json:"targets"`
	Spend   template.HTML `json:"spend"`
	Work    template.HTML `json:"work"`
	Charts  []chartAnswer `json:"charts"`
}

type chartAnswer struct {
	ID    string        `json:"id"`
	Title string        `json:"title"`
	HTML  template.HTML `json:"html"`
}

// encodeAnswer writes the answer as JSON without escaping <, > and &: it is
// read by the page's script, never placed inside HTML as text, and the
// charts would otherwise grow by half.
func encodeAnswer(a *planAnswer) ([]byte, error) {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(a); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

func answer(sc *scenarios.Scenario, r *scenarios.Result, p *report.Panel) *planAnswer {
	a := &planAnswer{
		Scenario: r.Scenario, Status: r.Status, Objective: r.Objective, Caution: r.Caution,
		Headline: render.Headline(r), Shortfalls: append(render.ShortfallWords(r), confidenceWords(r)...), Funding: append(render.FundingWords(r), confidentBudgetWords(r)...),
		Warnings: []string{}, ClassWarnings: []classWarningAnswer{}, Figures: figures(sc, r),
		Panel: panelAnswer{Summary: p.Summary, LOS: p.LOS, Targets: p.Targets, Spend: p.Spend, Work: p.Work},
	}
	classText := map[string]bool{}
	for _, w := range r.ClassWarnings {
		classText[w.Text] = true
		cw := classWarningAnswer{Text: w.Text, Suggested: w.Suggested}
		if cw.Suggested == nil {
			cw.Suggested = []scenarios.TargetSpec{}
		}
		a.ClassWarnings = append(a.ClassWarnings, cw)
	}
	for _, w := range r.Warnings {
		if !classText[w] {
			a.Warnings = append(a.Warnings, w)
		}
	}
	for _, c := range p.Charts {
		a.Panel.Charts = append(a.Panel.Charts, chartAnswer{ID: c.ID, Title: c.Title, HTML: c.HTML})
	}
	return a
}

func currency(r *scenarios.Result) string {
	if r.Currency == "" {
		return ""
	}
	return r.Currency + " "
}

func score(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }

// figures are the rows of a comparison column.
func figures(sc *scenarios.Scenario, r *scenarios.Result) []figure {
	cur := currency(r)
	status := "every target met"
	if r.Status != scenarios.Optimal {
		status = strings.ReplaceAll(string(r.Status), "-", " ")
	}
	labels := make([]string, len(sc.Targets))
	for i, t := range sc.Targets {
		labels[i] = t.Label
	}
	targets := "none"
	if len(labels) > 0 {
		targets = strings.Join(labels, "; ")
	}
	fs := []figure{
		{"Network budget", budgetWords(r)},
		{"Cost escalation", strconv.FormatFloat(math.Round(100*r.Escalation*1e6)/1e6, 'f', -1, 64) + "% a year"},
		{"Objective", r.Objective},
		{"Targets", targets},
		{"Status", status},
		{"Condition score (0-100, average over the years)", score(r.ConditionScore)},
		{"Total spend", cur + render.Money(r.TotalCost)},
		{"Present value of spend", cur + render.Money(r.PresentValue)},
		{"Targets met", fmt.Sprintf("%d of %d", render.TargetsMet(r), len(r.Targets))},
	}
	fs = append(fs, figure{fmt.Sprintf("Network poor share today (start of %d)", r.StartYear), render.Percent(r.Initial.Network.Shares.Poor)})
	for _, t := range render.LOSYears(r.Horizon) {
		y := r.Years[t-1]
		fs = append(fs, figure{fmt.Sprintf("Network poor share, end of %d", y.Year), render.Percent(y.Network.Shares.Poor)})
	}
	last := r.Years[len(r.Years)-1]
	fs = append(fs,
		figure{fmt.Sprintf("Network good share, end of %d", last.Year), render.Percent(last.Network.Shares.Good)},
		figure{fmt.Sprintf("Network condition score, end of %d", last.Year), score(last.Network.Score)},
	)
	level, extra, hold := "-", "-", "-"
	if f := r.Funding; f != nil {
		if f.LevelBudget != nil {
			level = cur + render.Money(*f.LevelBudget)
		}
		if f.ExtraPresentValue != nil {
			extra = cur + render.Money(*f.ExtraPresentValue)
		}
		switch {
		case f.Unreachable != "" && f.OtherTargetsOnly:
			// The amounts are for the targets money can meet.
			level, extra = level+" (no amount meets all)", extra+" (no amount meets all)"
		case f.Unreachable != "":
			level, extra = "no amount", "no amount"
		}
		if f.HoldBudget != nil {
			hold = cur + render.Money(*f.HoldBudget)
		}
	}
	fs = append(fs, figure{"Least level budget meeting every target", level}, figure{"Extra money closing the shortfalls (present value)", extra},
		figure{"Least level budget holding today's condition", hold})
	if b := r.Baseline; b != nil {
		fs = append(fs, figure{"Condition score of the same money spent worst first", score(b.ConditionScore)})
	}
	return fs
}

// budgetWords writes the network budget of a plan: one amount a year, or
// the amounts by runs of years.
func budgetWords(r *scenarios.Result) string {
	cur := currency(r)
	var runs []string
	for i := 0; i < len(r.Years); {
		b := r.Years[i].Budget
		j := i
		for j+1 < len(r.Years) && sameBudget(r.Years[j+1].Budget, b) {
			j++
		}
		amount := "no cap"
		if b != nil {
			amount = cur + render.Money(*b)
		}
		span := strconv.Itoa(r.Years[i].Year)
		if j > i {
			span += "-" + strconv.Itoa(r.Years[j].Year)
		}
		runs = append(runs, amount+" in "+span)
		i = j + 1
	}
	if len(runs) == 1 {
		if r.Years[0].Budget == nil {
			return "no cap"
		}
		return cur + render.Money(*r.Years[0].Budget) + " a year"
	}
	if len(runs) > 5 {
		runs = append(runs[:4], fmt.Sprintf("and %d more changes", len(runs)-4))
	}
	return strings.Join(runs, ", ")
}

func sameBudget(a, b *float64) bool {
	return (a == nil && b == nil) || (a != nil && b != nil && *a == *b)
}

// inputs lists the source's files for a report's run details, as paths
// beside the path given on the command line.
func (src *Source) inputs() []report.InputFile {
	var out []report.InputFile
	for _, in := range src.Scenario.Scenario.Inputs {
		out = append(out, report.InputFile{Path: filepath.Join(filepath.Dir(src.Path), filepath.FromSlash(in.Name)), SHA256: in.SHA256})
	}
	return out
}

var nonWord = sync.OnceValue(func() *regexp.Regexp { return regexp.MustCompile(`[^a-z0-9]+`) })

// fileName names a download: the alternative's name, or the scenario
// file's, made safe for any file system.
func fileName(path, name string, comparison bool) string {
	base := strings.TrimSuffix(filepath.Base(path), filepath.Ext(path))
	if n := strings.Trim(nonWord().ReplaceAllString(strings.ToLower(name), "-"), "-"); n != "" {
		base = n
	}
	base = strings.Trim(nonWord().ReplaceAllString(strings.ToLower(base), "-"), "-")
	if len(base) > 60 {
		base = strings.TrimRight(base[:60], "-")
	}
	if base == "" {
		base = "scenario"
	}
	if comparison {
		return base + "-comparison"
	}
	return base + "-what-if"
}
