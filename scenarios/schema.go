package scenarios

import (
	"fmt"
	"math"
	"strconv"

	"gopkg.in/yaml.v3"
)

// The types in this file mirror the scenario file (docs/scenario-format.md)
// key for key. They hold what was written, with lines, before any check.

type fileScenario struct {
	Name           string               `yaml:"name"`
	Extends        string               `yaml:"extends"`
	Description    string               `yaml:"description"`
	StartYear      *int                 `yaml:"start_year"`
	Horizon        *int                 `yaml:"horizon"`
	Currency       string               `yaml:"currency"`
	DiscountRate   *float64             `yaml:"discount_rate"`
	CostEscalation *float64             `yaml:"cost_escalation"`
	Scales         map[string]fileScale `yaml:"scales"`
	Classes        []fileClass          `yaml:"classes"`
	Treatments     []fileTreatment      `yaml:"treatments"`
	InventoryCSV   *fileInventoryCSV    `yaml:"inventory_csv"`
	Budget         *fileBudget          `yaml:"budget"`
	Targets        []fileTarget         `yaml:"targets"`
	Objective      string               `yaml:"objective"`
	ClassWarnings  *fileClassWarnings   `yaml:"class_warnings"`
	Lines          lines
	// source is where the scenario was read from, for the files it names.
	source inputSource
}

type fileScale struct {
	Preset string              `yaml:"preset"`
	States []fileState         `yaml:"states"`
	Groups map[string][]string `yaml:"groups"`
	Lines  lines
}

type fileState struct {
	Name  string   `yaml:"name"`
	Min   *float64 `yaml:"min"`
	Max   *float64 `yaml:"max"`
	Value *float64 `yaml:"value"`
	Lines lines
}

type fileClass struct {
	Name            string             `yaml:"name"`
	Scale           string             `yaml:"scale"`
	Unit            string             `yaml:"unit"`
	Inventory       *stateNumbers      `yaml:"inventory"`
	InventoryCSV    *fileInventoryCSV  `yaml:"inventory_csv"`
	Deterioration   *fileDeterioration `yaml:"deterioration"`
	Treatments      []string           `yaml:"treatments"`
	ReplacementCost *float64           `yaml:"replacement_cost"`
	Weight          *float64           `yaml:"weight"`
	RoutineCost     *stateNumbers      `yaml:"routine_cost"`
	AfterWork       *fileAfterWork     `yaml:"after_work"`
	MinIntervals    *treatmentYears    `yaml:"min_intervals"`
	LastTreated     *lastTreatedSpec   `yaml:"last_treated"`
	SegmentSize     *float64           `yaml:"segment_size"`
	Lines           lines
}

// fileAfterWork is a class's wear in the first years after any treatment.
type fileAfterWork struct {
	Years         *int               `yaml:"years"`
	Deterioration *fileDeterioration `yaml:"deterioration"`
	Lines         lines
}

type fileDeterioration struct {
	Matrix           *matrix   `yaml:"matrix"`
	YearsInState     []float64 `yaml:"years_in_state"`
	AllowImprovement bool      `yaml:"allow_improvement"`
	Fit              string    `yaml:"fit"`       // a fit file (resolveFits)
	FitClass         string    `yaml:"fit_class"` // its class, when not named as here
	Family           string    `yaml:"family"`    // one family of it, or all
	At               string    `yaml:"at"`        // its covariate model at named values
	Lines            lines
	// evidence is what the fit file keeps about the estimate (resolveFits),
	// for simulations that draw the matrix.
	evidence *MatrixEvidence
	// split holds the fit's families when the class is to be split by the
	// family columns of its segment list (resolveFits, splitFamilies).
	split *familySplit
}

type fileTreatment struct {
	Name         string      `yaml:"name"`
	AppliesTo    []string    `yaml:"applies_to"`
	Cost         *costSpec   `yaml:"cost"`
	Effect       *fileEffect `yaml:"effect"`
	AgesSameYear *bool       `yaml:"ages_same_year"`
	// Renewal says whether the treatment's spend counts as renewal in the
	// asset management plan indicators (default: it restores the best
	// state from every state it applies to).
	Renewal     *bool `yaml:"renewal"`
	MinInterval *int  `yaml:"min_interval"`
	Lines       lines
}

type fileEffect struct {
	To           string            `yaml:"to"`
	Improve      *int              `yaml:"improve"`
	Distribution *distributionSpec `yaml:"distribution"`
	Lines        lines
}

type fileBudget struct {
	Yearly    *amounts          `yaml:"yearly"`
	Groups    []fileBudgetGroup `yaml:"groups"`
	CarryOver bool              `yaml:"carry_over"`
	// IncludesRoutine counts routine costs against the yearly caps.
	IncludesRoutine bool `yaml:"includes_routine"`
	// MinYearly is money ring-fenced for classes or budget groups.
	MinYearly *namedAmounts `yaml:"min_yearly"`
	Lines     lines
}

type fileBudgetGroup struct {
	Name    string   `yaml:"name"`
	Classes []string `yaml:"classes"`
	Yearly  *amounts `yaml:"yearly"`
	Lines   lines
}

type fileTarget struct {
	Class           string   `yaml:"class"`
	Group           string   `yaml:"group"`
	State           string   `yaml:"state"`
	MaxShare        *float64 `yaml:"max_share"`
	MinShare        *float64 `yaml:"min_share"`
	MinAverageIndex *float64 `yaml:"min_average_index"`
	FromYear        *int     `yaml:"from_year"`
	ToYear          *int     `yaml:"to_year"`
	Hold            bool     `yaml:"hold"`
	Confidence      *float64 `yaml:"confidence"`
	Lines           lines
}

// fileClassWarnings are the thresholds of the warnings on what a plan does
// to each class (classwarn.go).
type fileClassWarnings struct {
	PoorShareRise    *float64 `yaml:"poor_share_rise"`
	WorstStateGrowth *float64 `yaml:"worst_state_growth"`
	BacklogGrowth    *float64 `yaml:"backlog_growth"`
	Lines            lines
}

// namedAmounts maps names (classes or budget groups) to amounts, in file
// order, with lines.
type namedAmounts struct {
	Entries []namedAmount
	Line    int
}

type namedAmount struct {
	Name   string
	Amount amounts
	Line   int
}

func (na *namedAmounts) decodeNode(d *decoder, n *yaml.Node, path string) {
	na.Line = n.Line
	eachKey(d, n, path, "want class or budget group names with a yearly amount (e.g. {footpaths: 150000})", "written twice; keep one", func(kl keyLine, field string) {
		e := namedAmount{Name: kl.key, Line: kl.line}
		e.Amount.decodeNode(d, resolve(kl.val), field)
		na.Entries = append(na.Entries, e)
	})
}

// eachKey calls fn for each key of the mapping n once, in file order,
// after refusing a node that is not a mapping (want says what to write)
// and any key written twice (twice is the message).
func eachKey(d *decoder, n *yaml.Node, path, want, twice string, fn func(kl keyLine, field string)) {
	if n.Kind != yaml.MappingNode {
		d.add(n.Line, path, "%s, got %s", want, kindName(n))
		return
	}
	seen := map[string]bool{}
	for _, kl := range mappingKeys(n) {
		field := joinPath(path, kl.key)
		if seen[kl.key] {
			d.add(kl.line, field, "%s", twice)
			continue
		}
		seen[kl.key] = true
		fn(kl, field)
	}
}

// amounts is one number for every year, or a list with one per year.
type amounts struct {
	Single *float64
	List   []float64
	Line   int
}

func (a *amounts) decodeNode(d *decoder, n *yaml.Node, path string) {
	a.Line = n.Line
	switch n.Kind {
	case yaml.SequenceNode:
		a.List = make([]float64, len(n.Content))
		for i, item := range n.Content {
			if f, ok := d.number(resolve(item), fmt.Sprintf("%s[%d]", path, i)); ok {
				a.List[i] = f
			}
		}
	default:
		if f, ok := d.number(n, path); ok {
			a.Single = &f
		}
	}
}

// stateNumbers maps state names to numbers, in file order, with lines.
type stateNumbers struct {
	Entries []stateNumber
	Line    int
}

type stateNumber struct {
	State string
	Value float64
	Line  int
}

func (s *stateNumbers) decodeNode(d *decoder, n *yaml.Node, path string) {
	s.Line = n.Line
	eachKey(d, n, path, "want state names with numbers (e.g. {Good: 120, Fair: 40})", "state written twice; keep one", func(kl keyLine, field string) {
		if f, ok := d.number(resolve(kl.val), field); ok {
			s.Entries = append(s.Entries, stateNumber{State: kl.key, Value: f, Line: kl.line})
		}
	})
}

// costSpec is one unit cost for every state, or one per state.
type costSpec struct {
	Single  *float64
	ByState *stateNumbers
	Line    int
}

func (c *costSpec) decodeNode(d *decoder, n *yaml.Node, path string) {
	c.Line = n.Line
	if n.Kind == yaml.MappingNode {
		c.ByState = &stateNumbers{}
		c.ByState.decodeNode(d, n, path)
		return
	}
	if f, ok := d.number(n, path); ok {
		c.Single = &f
	}
}

// distributionSpec is the distribution after treatment: one for every state
// treated ({Very good: 0.8, Good: 0.2}) or one per state treated
// ({Fair: {Very good: 0.7, Good: 0.3}, Poor: {...}}).
type distributionSpec struct {
	Same    *stateNumbers
	ByState map[string]*stateNumbers
	Order   []string
	Line    int
}

func (ds *distributionSpec) decodeNode(d *decoder, n *yaml.Node, path string) {
	ds.Line = n.Line
	if n.Kind != yaml.MappingNode {
		d.add(n.Line, path, "want state names with probabilities, got %s", kindName(n))
		return
	}
	keys := mappingKeys(n)
	nested := len(keys) > 0 && resolve(keys[0].val).Kind == yaml.MappingNode
	if !nested {
		ds.Same = &stateNumbers{}
		ds.Same.decodeNode(d, n, path)
		return
	}
	ds.ByState = map[string]*stateNumbers{}
	for _, kl := range keys {
		field := joinPath(path, kl.key)
		if _, dup := ds.ByState[kl.key]; dup {
			d.add(kl.line, field, "state written twice; keep one")
			continue
		}
		sn := &stateNumbers{}
		sn.decodeNode(d, resolve(kl.val), field)
		ds.ByState[kl.key] = sn
		ds.Order = append(ds.Order, kl.key)
	}
}

// matrix is a transition matrix written as one list per state, with the
// line of each row.
type matrix struct {
	Rows  [][]float64
	Lines []int
	Line  int
}

func (m *matrix) decodeNode(d *decoder, n *yaml.Node, path string) {
	m.Line = n.Line
	if n.Kind != yaml.SequenceNode {
		d.add(n.Line, path, "want one list of probabilities per state, got %s", kindName(n))
		return
	}
	for i, rowNode := range n.Content {
		rowNode = resolve(rowNode)
		field := fmt.Sprintf("%s[%d]", path, i)
		var row []float64
		if rowNode.Kind != yaml.SequenceNode {
			d.add(rowNode.Line, field, "want a list of probabilities, got %s", kindName(rowNode))
		} else {
			for j, c := range rowNode.Content {
				f, _ := d.number(resolve(c), fmt.Sprintf("%s[%d]", field, j))
				row = append(row, f)
			}
		}
		m.Rows = append(m.Rows, row)
		m.Lines = append(m.Lines, rowNode.Line)
	}
}

// treatmentYears maps treatment names to whole numbers of years, in file
// order, with lines (a class's min_intervals).
type treatmentYears struct {
	Entries []treatmentYear
	Line    int
}

type treatmentYear struct {
	Treatment string
	Years     int
	Line      int
}

func (ty *treatmentYears) decodeNode(d *decoder, n *yaml.Node, path string) {
	ty.Line = n.Line
	eachKey(d, n, path, "want treatment names with years (e.g. {crack-seal: 6})", "treatment written twice; keep one", func(kl keyLine, field string) {
		v := resolve(kl.val)
		f, ok := d.number(v, field)
		if !ok {
			return
		}
		if f != math.Trunc(f) || math.Abs(f) > 1e9 {
			d.add(kl.line, field, "want a whole number of years, got %s", v.Value)
			return
		}
		ty.Entries = append(ty.Entries, treatmentYear{Treatment: kl.key, Years: int(f), Line: kl.line})
	})
}

// lastTreatedSpec is a class's last_treated: for each year, the share of
// the class's quantity last treated in that year, one share for every
// state ({2024: 0.1}) or one per state ({2024: {Good: 0.3, Fair: 0.1}}).
type lastTreatedSpec struct {
	Entries []lastTreatedEntry
	Line    int
}

type lastTreatedEntry struct {
	Year    int
	Share   *float64
	ByState *stateNumbers
	Line    int
}

func (lt *lastTreatedSpec) decodeNode(d *decoder, n *yaml.Node, path string) {
	lt.Line = n.Line
	eachKey(d, n, path, "want years with shares (e.g. {2024: 0.1, 2021: {Good: 0.3}})", "year written twice; keep one", func(kl keyLine, field string) {
		year, err := strconv.Atoi(kl.key)
		if err != nil {
			d.add(kl.line, field, "%q is not a year; write the calendar year of the last work, e.g. 2024", kl.key)
			return
		}
		e := lastTreatedEntry{Year: year, Line: kl.line}
		v := resolve(kl.val)
		if v.Kind == yaml.MappingNode {
			e.ByState = &stateNumbers{}
			e.ByState.decodeNode(d, v, field)
		} else if f, ok := d.number(v, field); ok {
			e.Share = &f
		} else {
			return
		}
		lt.Entries = append(lt.Entries, e)
	})
}
