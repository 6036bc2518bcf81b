package scenarios

import (
	"fmt"
	"io"
	"io/fs"
	"math"
	"slices"
	"strconv"
	"strings"
	"testing/fstest"
	"unicode/utf8"

	"gopkg.in/yaml.v3"
)

// What-if changes (the `wearplan serve` page): a planner changes the yearly
// budget, the cost escalation, the targets or the objective of a loaded
// scenario and plans again. The changes are not applied to the validated
// Scenario: they are written as a small YAML overlay and laid over the
// scenario's node tree exactly as a file that `extends` it would be, then
// decoded and checked by the same code as a file. So a change is valid if
// and only if the same keys typed into the file would be, and problems come
// back as the same Issues, under the file name ChangesFile. The same tree
// written out (WriteYAML) is a scenario file that loads and plans the same.

// ChangesFile is the file name that problems found in what-if changes carry.
const ChangesFile = "what-if changes"

// Limits on what-if changes; more is not a what-if but a new scenario.
const (
	maxBudgetSteps = 100
	maxTargets     = 100
	maxNameLength  = 200
)

// Changes are what-if changes to a scenario. A nil or empty field keeps
// the scenario's own value.
type Changes struct {
	// Name renames the scenario (a kept alternative's name).
	Name string `json:"name,omitempty"`
	// BudgetLevel sets the network's yearly budget to one amount for every
	// year (before BudgetSteps).
	BudgetLevel *float64 `json:"budget_level,omitempty"`
	// BudgetSteps change the network's yearly budget for a span of years,
	// in order, after BudgetLevel: "cut 15% from 2029" is
	// {from_year: 2029, percent: -15}.
	BudgetSteps []BudgetStep `json:"budget_steps,omitempty"`
	// Escalation replaces cost_escalation (a fraction a year: 0.03 for 3%).
	Escalation *float64 `json:"cost_escalation,omitempty"`
	// Targets replace the scenario's targets when not nil; an empty list
	// removes them all.
	Targets *[]TargetSpec `json:"targets,omitempty"`
	// Objective replaces the objective: max-condition or min-cost.
	Objective string `json:"objective,omitempty"`
	// SegmentSizes set the size of the pieces a simulation cuts a class
	// into (segment_size), by class name.
	SegmentSizes map[string]float64 `json:"segment_sizes,omitempty"`
}

// BudgetStep changes the network budget of the years FromYear to ToYear
// (calendar years; ToYear 0 means the last planning year): Percent
// multiplies each year's amount by 1 + Percent/100 (rounded to the cent),
// Amount sets it. Give exactly one of the two.
type BudgetStep struct {
	FromYear int      `json:"from_year"`
	ToYear   int      `json:"to_year,omitempty"`
	Percent  *float64 `json:"percent,omitempty"`
	Amount   *float64 `json:"amount,omitempty"`
}

// TargetSpec is a target written with the keys of the scenario file
// (docs/scenario-format.md): {class, group, max_share | min_share}, {class,
// state, max_share | min_share}, {class, min_average_index}, or {class,
// hold: true}, with optional from_year and to_year.
type TargetSpec struct {
	Class           string   `json:"class,omitempty" yaml:"class,omitempty"`
	Group           string   `json:"group,omitempty" yaml:"group,omitempty"`
	State           string   `json:"state,omitempty" yaml:"state,omitempty"`
	MaxShare        *float64 `json:"max_share,omitempty" yaml:"max_share,omitempty"`
	MinShare        *float64 `json:"min_share,omitempty" yaml:"min_share,omitempty"`
	MinAverageIndex *float64 `json:"min_average_index,omitempty" yaml:"min_average_index,omitempty"`
	FromYear        *int     `json:"from_year,omitempty" yaml:"from_year,omitempty"`
	ToYear          *int     `json:"to_year,omitempty" yaml:"to_year,omitempty"`
	Hold            bool     `json:"hold,omitempty" yaml:"hold,omitempty"`
	Confidence      *float64 `json:"confidence,omitempty" yaml:"confidence,omitempty"`
}

// Editable is a loaded scenario kept as written: its YAML node tree with
// any extends resolved. What-if changes are laid over it (Apply) and it can
// be written back out as one scenario file (WriteYAML). An Editable is
// never modified after loading, so one may serve many goroutines at once.
type Editable struct {
	// Scenario is the scenario as loaded, without changes.
	Scenario *Scenario
	name     string
	root     *yaml.Node
	files    []string
	// data holds the bytes of every file the scenario was read from (its
	// bases, segment lists, fit files), read once at loading: changes are
	// checked against the same data, and no file is read afterwards.
	data fs.FS
	// heading is the comment block at the top of the file, without the
	// #s: where a demo file says that it is invented.
	heading string
}

// LoadEditable reads and validates the scenario name from fsys, like Load,
// and keeps it for what-if changes.
func LoadEditable(fsys fs.FS, name string) (*Editable, error) {
	sc, root, files, err := load(fsys, name, LoadOptions{})
	if err != nil {
		return nil, err
	}
	// The standard library's in-memory file system (from testing/fstest,
	// but nothing about it is test-only) holds the snapshot.
	snap := fstest.MapFS{}
	for _, in := range sc.Inputs {
		b, err := readInput(fsys, in.Name, 0, nil)
		if err != nil {
			return nil, &InputError{Issues: []*Issue{{File: in.Name, Msg: describeOpenError(err)}}}
		}
		snap[in.Name] = &fstest.MapFile{Data: b}
	}
	e := &Editable{Scenario: sc, name: name, root: root, files: files, data: snap}
	e.heading = headingComment(string(snap[name].Data))
	return e, nil
}

// LoadEditableFile is LoadEditable for a scenario file on disk, with the
// files it names held to its folder as LoadFile holds them.
func LoadEditableFile(path string) (*Editable, error) {
	fsys, name, err := openScenarioFolder(path)
	if err != nil {
		return nil, err
	}
	defer fsys.Close()
	return LoadEditable(fsys, name)
}

// headingComment returns the comment lines at the top of a YAML text,
// without their #s.
func headingComment(text string) string {
	var lines []string
	for _, l := range strings.Split(text, "\n") {
		l = strings.TrimSpace(l)
		if !strings.HasPrefix(l, "#") {
			break
		}
		lines = append(lines, strings.TrimSpace(strings.TrimPrefix(l, "#")))
	}
	return strings.Join(lines, "\n")
}

// Current returns the scenario's own settings in the form of Changes: the
// name, the network budget level when it is the same every year (nil when
// it varies by year or there is none), the cost escalation, the targets as
// written in the file, and the objective in force.
func (e *Editable) Current() Changes {
	sc := e.Scenario
	esc := sc.Escalation
	ch := Changes{Name: sc.Name, Escalation: &esc, Objective: sc.Objective.String()}
	if level, ok := levelOf(sc.Budget); ok {
		ch.BudgetLevel = &level
	}
	targets := []TargetSpec{}
	for _, kl := range mappingKeys(e.root) {
		if kl.key == "targets" {
			// The file passed the strict decoder, so this cannot fail.
			_ = kl.val.Decode(&targets)
		}
	}
	ch.Targets = &targets
	for k := range sc.Classes {
		if v := sc.Classes[k].SegmentSize; v > 0 {
			if ch.SegmentSizes == nil {
				ch.SegmentSizes = map[string]float64{}
			}
			ch.SegmentSizes[sc.Classes[k].Name] = v
		}
	}
	return ch
}

// levelOf returns the budget's amount when it is the same every year.
func levelOf(b []float64) (float64, bool) {
	if len(b) == 0 {
		return 0, false
	}
	for _, v := range b {
		if v != b[0] {
			return 0, false
		}
	}
	return b[0], true
}

// Apply returns the scenario with the changes laid over it, checked as a
// file would be. Problems come back as an *InputError; those in the
// changes name the file ChangesFile and the field as it would be written in
// a scenario file (budget.yearly, targets[1].max_share) or, for budget
// steps, budget_steps[i].
func (e *Editable) Apply(ch Changes) (*Scenario, error) {
	root, files, err := e.overlay(ch)
	if err != nil {
		return nil, err
	}
	sc, _, err := decodeScenario(inputSource{fsys: e.data, name: e.name}, root, files)
	if err != nil {
		return nil, err
	}
	sc.Inputs = slices.Clone(e.Scenario.Inputs)
	if d := e.describe(sc); d != "" {
		sc.Notes = append(sc.Notes, d)
	}
	return sc, nil
}

// WriteYAML writes the scenario with the changes laid over it as one
// scenario file: the keys, comments and layout of the file (and of the
// files it extends, merged), the changed keys in place, no extends, and a
// heading comment that names the files it came from. The file loads with
// `wearplan check` and plans the same as Apply's scenario. Changes with
// problems write nothing and return the *InputError.
func (e *Editable) WriteYAML(w io.Writer, ch Changes) error {
	root, files, err := e.overlay(ch)
	if err != nil {
		return err
	}
	sc, _, err := decodeScenario(inputSource{fsys: e.data, name: e.name}, root, files)
	if err != nil {
		return err
	}
	var head strings.Builder
	fmt.Fprintf(&head, "Written by wearplan from %s", e.name)
	if len(e.files) > 1 {
		fmt.Fprintf(&head, " (which extends %s)", strings.Join(e.files[1:], ", "))
	}
	head.WriteString(".")
	if d := e.describe(sc); d != "" {
		head.WriteString("\n" + d + ".")
	}
	head.WriteString("\nIt stands alone: the bases of the original are merged into it.")
	for _, in := range e.Scenario.Inputs {
		fmt.Fprintf(&head, "\nsha256 %s  %s", in.SHA256, in.Name)
	}
	if e.heading != "" {
		fmt.Fprintf(&head, "\n\nThe heading of %s:\n%s", e.name, e.heading)
	}
	doc := &yaml.Node{Kind: yaml.DocumentNode, HeadComment: head.String(), Content: []*yaml.Node{plainCopy(root)}}
	var out strings.Builder
	enc := yaml.NewEncoder(&out)
	enc.SetIndent(2)
	if err := enc.Encode(doc); err != nil {
		return fmt.Errorf("writing the scenario: %w", err)
	}
	if err := enc.Close(); err != nil {
		return fmt.Errorf("writing the scenario: %w", err)
	}
	_, err = io.WriteString(w, out.String())
	return err
}

// overlay builds the changes as a YAML mapping and lays it over the
// scenario's tree. The overlay is the last file of the chain, named
// ChangesFile; its nodes carry line 0 of that file (unknown), since the
// planner never sees its text.
func (e *Editable) overlay(ch Changes) (*yaml.Node, []string, error) {
	files := append(slices.Clip(e.files), ChangesFile)
	at := (len(files) - 1) * lineBlock
	is := &issues{file: e.name, files: files}
	o := overlayNodes{line: at}
	top := o.mapping(yaml.Style(0))
	if name := strings.TrimSpace(ch.Name); name != "" {
		if utf8.RuneCountInString(name) > maxNameLength || strings.ContainsAny(name, "\n\r\t") {
			is.add(at, "name", "a name is one line of at most %d characters", maxNameLength)
		}
		o.set(top, "name", o.str(name))
	}
	if yearly, ok := e.yearly(ch, is, at); ok {
		budget := o.mapping(yaml.Style(0))
		v := o.num(yearly[0])
		if _, same := levelOf(yearly); !same {
			v = o.seq(yaml.FlowStyle)
			for _, a := range yearly {
				v.Content = append(v.Content, o.num(a))
			}
		}
		o.set(budget, "yearly", v)
		o.set(top, "budget", budget)
	}
	if ch.Escalation != nil {
		if bad(*ch.Escalation) {
			is.add(at, "cost_escalation", "want a finite number")
		}
		o.set(top, "cost_escalation", o.num(*ch.Escalation))
	}
	if ch.Targets != nil {
		if len(*ch.Targets) > maxTargets {
			is.add(at, "targets", "%d targets; give at most %d", len(*ch.Targets), maxTargets)
		}
		list := o.seq(yaml.Style(0))
		for i, t := range *ch.Targets {
			list.Content = append(list.Content, o.target(t, fmt.Sprintf("targets[%d]", i), is))
		}
		o.set(top, "targets", list)
	}
	if ch.Objective != "" {
		o.set(top, "objective", o.str(ch.Objective))
	}
	if len(ch.SegmentSizes) > 0 {
		// Classes merge item by item on name, so each item sets one key of
		// one class; an unknown name would add a class, so it is refused.
		list := o.seq(yaml.Style(0))
		for _, name := range sortedKeys(ch.SegmentSizes) {
			if e.Scenario.classIndex(name) < 0 {
				is.add(at, "segment_sizes."+name, "unknown class %q", name)
				continue
			}
			v := ch.SegmentSizes[name]
			if bad(v) {
				is.add(at, "segment_sizes."+name, "want a finite number")
			}
			// Block style: the merged class keeps the style of the file.
			item := o.mapping(yaml.Style(0))
			o.set(item, "name", o.str(name))
			o.set(item, "segment_size", o.num(v))
			list.Content = append(list.Content, item)
		}
		o.set(top, "classes", list)
	}
	if err := is.err(); err != nil {
		return nil, nil, err
	}
	return mergeNodes(e.root, top, ""), files, nil
}

func bad(v float64) bool { return math.IsNaN(v) || math.IsInf(v, 0) }

// yearly works out the network's yearly budget from the level and the
// steps; ok is false when the changes leave the budget as it is (or when a
// step has a problem, which is then recorded).
func (e *Editable) yearly(ch Changes, is *issues, at int) ([]float64, bool) {
	if ch.BudgetLevel == nil && len(ch.BudgetSteps) == 0 {
		return nil, false
	}
	sc := e.Scenario
	var out []float64
	switch {
	case ch.BudgetLevel != nil:
		if bad(*ch.BudgetLevel) {
			is.add(at, "budget_level", "want a finite amount")
			return nil, false
		}
		out = make([]float64, sc.Horizon)
		for t := range out {
			out[t] = *ch.BudgetLevel
		}
	case sc.Budget != nil:
		out = slices.Clone(sc.Budget)
	default:
		is.add(at, "budget_steps", "the scenario has no network budget to change; set a yearly level first")
		return nil, false
	}
	if len(ch.BudgetSteps) > maxBudgetSteps {
		is.add(at, "budget_steps", "%d changes; give at most %d", len(ch.BudgetSteps), maxBudgetSteps)
		return nil, false
	}
	first, last := sc.StartYear, sc.Year(sc.Horizon)
	ok := true
	for i, st := range ch.BudgetSteps {
		field := fmt.Sprintf("budget_steps[%d]", i)
		to := st.ToYear
		if to == 0 {
			to = last
		}
		switch {
		case st.FromYear < first || st.FromYear > last:
			is.add(at, field+".from_year", "%d is outside the plan %d-%d", st.FromYear, first, last)
			ok = false
			continue
		case to < st.FromYear || to > last:
			is.add(at, field+".to_year", "%d: give a year from %d to %d", to, st.FromYear, last)
			ok = false
			continue
		case (st.Percent == nil) == (st.Amount == nil):
			is.add(at, field, "give exactly one of percent (a change such as -15) or amount (the yearly budget)")
			ok = false
			continue
		case st.Percent != nil && (bad(*st.Percent) || *st.Percent < -100):
			is.add(at, field+".percent", "%s%%: a cut goes at most to zero (-100%%)", num(*st.Percent))
			ok = false
			continue
		case st.Amount != nil && (bad(*st.Amount) || *st.Amount < 0):
			is.add(at, field+".amount", "want an amount of zero or more")
			ok = false
			continue
		}
		for y := st.FromYear; y <= to; y++ {
			t := y - first
			if st.Percent != nil {
				out[t] = math.Round(out[t]*(1+*st.Percent/100)*100) / 100
			} else {
				out[t] = *st.Amount
			}
		}
	}
	return out, ok
}

// describe says in one sentence how sc differs from the scenario as
// loaded, or "" when it does not (in the settings changes can touch).
func (e *Editable) describe(sc *Scenario) string {
	base := e.Scenario
	var parts []string
	if sc.Name != base.Name {
		parts = append(parts, fmt.Sprintf("renamed from %q", base.Name))
	}
	if !slices.Equal(sc.Budget, base.Budget) {
		parts = append(parts, "network budget "+budgetText(sc.Budget, sc.StartYear)+" (file: "+budgetText(base.Budget, base.StartYear)+")")
	}
	if sc.Escalation != base.Escalation {
		parts = append(parts, fmt.Sprintf("cost escalation %s a year (file: %s)", pct(sc.Escalation), pct(base.Escalation)))
	}
	if !sameTargets(sc.Targets, base.Targets) {
		labels := make([]string, len(sc.Targets))
		for i, t := range sc.Targets {
			labels[i] = t.Label
			if t.Confidence > 0 {
				labels[i] += " with " + pct(t.Confidence) + " confidence"
			}
		}
		text := "none"
		if len(labels) > 0 {
			text = strings.Join(labels, "; ")
		}
		parts = append(parts, "targets: "+text)
	}
	if sc.Objective != base.Objective {
		parts = append(parts, fmt.Sprintf("objective %s (file: %s)", sc.Objective, base.Objective))
	}
	for k := range sc.Classes {
		c, was := &sc.Classes[k], base.Classes[k].SegmentSize
		if c.SegmentSize != was {
			file := "its segment list"
			if was > 0 {
				file = num(was) + " " + c.Unit
			} else if len(c.Segments) == 0 {
				size, _ := DefaultSegmentSize(c.Unit, c.Initial)
				file = "default " + num(size) + " " + c.Unit
			}
			parts = append(parts, fmt.Sprintf("%s simulated in pieces of %s %s (file: %s)", c.Name, num(c.SegmentSize), c.Unit, file))
		}
	}
	if len(parts) == 0 {
		return ""
	}
	return "What-if changes to " + e.name + ": " + strings.Join(parts, "; ")
}

func sameTargets(a, b []Target) bool {
	return slices.EqualFunc(a, b, func(x, y Target) bool {
		a, b := x.Spec, y.Spec
		same := a.Label == b.Label && a.Class == b.Class && a.Kind == b.Kind && a.Group == b.Group && slices.Equal(a.States, b.States) && a.Value == b.Value && a.From == b.From && a.To == b.To
		return same && x.Label == y.Label && x.FromYear == y.FromYear && x.ToYear == y.ToYear && x.Confidence == y.Confidence
	})
}

// budgetText writes a yearly budget in words: one amount, or runs of
// years with the same amount.
func budgetText(b []float64, start int) string {
	if b == nil {
		return "no cap"
	}
	if v, ok := levelOf(b); ok {
		return money(v) + " a year"
	}
	var runs []string
	for i := 0; i < len(b); {
		j := i
		for j+1 < len(b) && b[j+1] == b[i] {
			j++
		}
		span := strconv.Itoa(start + i)
		if j > i {
			span += "-" + strconv.Itoa(start+j)
		}
		runs = append(runs, span+": "+money(b[i]))
		i = j + 1
	}
	return strings.Join(runs, ", ")
}

// overlayNodes makes the nodes of an overlay, all at one line.
type overlayNodes struct{ line int }

func (o overlayNodes) mapping(style yaml.Style) *yaml.Node {
	return &yaml.Node{Kind: yaml.MappingNode, Tag: "!!map", Style: style, Line: o.line}
}

func (o overlayNodes) seq(style yaml.Style) *yaml.Node {
	return &yaml.Node{Kind: yaml.SequenceNode, Tag: "!!seq", Style: style, Line: o.line}
}

func (o overlayNodes) str(s string) *yaml.Node {
	return &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: s, Line: o.line}
}

// num writes a number as a planner would type it (3825000, 0.025), tagged
// as the strict decoder expects a number written so to be.
func (o overlayNodes) num(v float64) *yaml.Node {
	s := num(v)
	tag := "!!float"
	if _, err := strconv.ParseInt(s, 10, 64); err == nil {
		tag = "!!int"
	}
	return &yaml.Node{Kind: yaml.ScalarNode, Tag: tag, Value: s, Line: o.line}
}

func (o overlayNodes) set(m *yaml.Node, key string, v *yaml.Node) {
	m.Content = append(m.Content, o.str(key), v)
}

// target writes one target as a flow mapping with the file's keys.
func (o overlayNodes) target(t TargetSpec, field string, is *issues) *yaml.Node {
	m := o.mapping(yaml.FlowStyle)
	if t.Class != "" {
		o.set(m, "class", o.str(t.Class))
	}
	if t.Group != "" {
		o.set(m, "group", o.str(t.Group))
	}
	if t.State != "" {
		o.set(m, "state", o.str(t.State))
	}
	for _, f := range []struct {
		key string
		v   *float64
	}{{"max_share", t.MaxShare}, {"min_share", t.MinShare}, {"min_average_index", t.MinAverageIndex}, {"confidence", t.Confidence}} {
		if f.v == nil {
			continue
		}
		if bad(*f.v) {
			is.add(o.line, field+"."+f.key, "want a finite number")
		}
		o.set(m, f.key, o.num(*f.v))
	}
	if t.FromYear != nil {
		o.set(m, "from_year", o.num(float64(*t.FromYear)))
	}
	if t.ToYear != nil {
		o.set(m, "to_year", o.num(float64(*t.ToYear)))
	}
	if t.Hold {
		o.set(m, "hold", &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!bool", Value: "true", Line: o.line})
	}
	return m
}

// plainCopy copies a node tree for writing: aliases are replaced by copies
// of what they stand for and anchors dropped, since merging files can put
// an alias before its anchor or give two anchors one name.
func plainCopy(n *yaml.Node) *yaml.Node {
	n = resolve(n)
	c := *n
	c.Anchor, c.Alias = "", nil
	c.Line, c.Column = 0, 0
	c.Content = make([]*yaml.Node, len(n.Content))
	for i, k := range n.Content {
		c.Content[i] = plainCopy(k)
	}
	return &c
}
