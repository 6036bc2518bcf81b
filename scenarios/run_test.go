package scenarios_test

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"math/big"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"testing/fstest"

	"gopkg.in/yaml.v3"

	"wearplan/scenarios"
)

// End-to-end checks on the demo scenario (invented data). The expected
// values are recomputed here from the demo file itself, read with yaml.v3
// directly rather than through the scenarios package, using only the model's
// definitions in docs/model.md; they are invariants of the model, not
// outside references.

const demoPath = "examples/marrowby.yaml"

// demoFile is an independent reading of the parts of the demo the checks need.
type demoFile struct {
	StartYear      int     `yaml:"start_year"`
	Horizon        int     `yaml:"horizon"`
	CostEscalation float64 `yaml:"cost_escalation"`
	Scales         map[string]struct {
		States []struct {
			Name  string  `yaml:"name"`
			Min   float64 `yaml:"min"`
			Max   float64 `yaml:"max"`
			Value float64 `yaml:"value"`
		} `yaml:"states"`
		Groups map[string][]string `yaml:"groups"`
	} `yaml:"scales"`
	Classes []struct {
		Name            string             `yaml:"name"`
		Scale           string             `yaml:"scale"`
		ReplacementCost float64            `yaml:"replacement_cost"`
		Inventory       map[string]float64 `yaml:"inventory"` // or from the segment list
		Deterioration   struct {
			Matrix       [][]float64 `yaml:"matrix"`
			YearsInState []float64   `yaml:"years_in_state"`
		} `yaml:"deterioration"`
		Treatments []string `yaml:"treatments"`
	} `yaml:"classes"`
	Treatments []struct {
		Name      string   `yaml:"name"`
		AppliesTo []string `yaml:"applies_to"`
		Cost      any      `yaml:"cost"`
		Effect    struct {
			To           string `yaml:"to"`
			Improve      int    `yaml:"improve"`
			Distribution any    `yaml:"distribution"`
		} `yaml:"effect"`
		AgesSameYear *bool `yaml:"ages_same_year"`
	} `yaml:"treatments"`
	InventoryCSV struct {
		File string `yaml:"file"`
	} `yaml:"inventory_csv"`
	Budget struct {
		Yearly float64 `yaml:"yearly"`
	} `yaml:"budget"`
	Targets []struct {
		Class    string   `yaml:"class"`
		Group    string   `yaml:"group"`
		MaxShare *float64 `yaml:"max_share"`
		FromYear int      `yaml:"from_year"`
		ToYear   int      `yaml:"to_year"`
		Hold     bool     `yaml:"hold"`
	} `yaml:"targets"`
}

// demoClass is one class of the demo in arrays, best state first.
type demoClass struct {
	name    string
	states  []string
	values  []float64
	groups  []string // good, fair or poor per state
	best    float64  // index at the best end of the scale
	worst   float64  // index at the worst end
	initial []float64
	p       [][]float64
	weight  float64 // normalised replacement value
	// per treatment name: unit cost and year's transition row by state
	cost map[string][]float64
	rows map[string][][]float64
}

func asFloat(t *testing.T, v any) float64 {
	t.Helper()
	switch x := v.(type) {
	case int:
		return float64(x)
	case float64:
		return x
	}
	t.Fatalf("want a number, got %T %v", v, v)
	return 0
}

func readDemo(t *testing.T, path string) (*demoFile, []demoClass) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var f demoFile
	if err := yaml.Unmarshal(data, &f); err != nil {
		t.Fatal(err)
	}
	var classes []demoClass
	totalValue := 0.0
	var segments map[string]map[string]*big.Rat
	if f.InventoryCSV.File != "" {
		segments = demoSegmentSums(t, filepath.Join(filepath.Dir(path), f.InventoryCSV.File), &f)
	}
	for _, fc := range f.Classes {
		s, ok := f.Scales[fc.Scale]
		if !ok {
			t.Fatalf("class %s: no scale %s", fc.Name, fc.Scale)
		}
		n := len(s.States)
		c := demoClass{name: fc.Name, cost: map[string][]float64{}, rows: map[string][][]float64{}}
		idx := map[string]int{}
		for i, st := range s.States {
			idx[st.Name] = i
			c.states = append(c.states, st.Name)
			c.values = append(c.values, st.Value)
			q := fc.Inventory[st.Name]
			if fc.Inventory == nil {
				q, _ = segments[fc.Name][st.Name].Float64()
			}
			c.initial = append(c.initial, q)
		}
		c.groups = make([]string, n)
		for g, names := range s.Groups {
			for _, name := range names {
				c.groups[idx[name]] = g
			}
		}
		if s.States[0].Value > s.States[1].Value {
			c.best, c.worst = s.States[0].Max, s.States[n-1].Min
		} else {
			c.best, c.worst = s.States[0].Min, s.States[n-1].Max
		}
		// Deterioration: the matrix as written, or p_ii = 1 - 1/d_i,
		// p_i,i+1 = 1/d_i with the worst state absorbing (docs/model.md, Deterioration).
		if fc.Deterioration.Matrix != nil {
			c.p = fc.Deterioration.Matrix
		} else {
			c.p = make([][]float64, n)
			for i := range c.p {
				c.p[i] = make([]float64, n)
				if i == n-1 {
					c.p[i][i] = 1
					continue
				}
				d := fc.Deterioration.YearsInState[i]
				c.p[i][i], c.p[i][i+1] = 1-1/d, 1/d
			}
		}
		// Treatments: row i of E_a P, or of E_a when the treatment does not
		// age in its year (docs/model.md, Treatments).
		for _, tn := range fc.Treatments {
			found := false
			for _, ft := range f.Treatments {
				if ft.Name != tn {
					continue
				}
				found = true
				cost := make([]float64, n)
				rows := make([][]float64, n)
				for _, sn := range ft.AppliesTo {
					i := idx[sn]
					switch v := ft.Cost.(type) {
					case map[string]any:
						cost[i] = asFloat(t, v[sn])
					default:
						cost[i] = asFloat(t, v)
					}
					e := make([]float64, n)
					switch {
					case ft.Effect.To != "":
						e[idx[ft.Effect.To]] = 1
					case ft.Effect.Improve > 0:
						e[max(i-ft.Effect.Improve, 0)] = 1
					default:
						dist := ft.Effect.Distribution.(map[string]any)
						if byState, ok := dist[sn].(map[string]any); ok {
							dist = byState
						}
						for to, pr := range dist {
							e[idx[to]] = asFloat(t, pr)
						}
					}
					if ft.AgesSameYear == nil || *ft.AgesSameYear {
						e = stepBy(e, c.p)
					}
					rows[i] = e
				}
				c.cost[tn], c.rows[tn] = cost, rows
			}
			if !found {
				t.Fatalf("class %s: treatment %s not in the catalogue", fc.Name, tn)
			}
		}
		// Network figures weight classes by replacement value (docs/model.md,
		// Network figures); the demo gives a replacement cost for every class.
		c.weight = fc.ReplacementCost * sum(c.initial)
		totalValue += c.weight
		classes = append(classes, c)
	}
	for k := range classes {
		classes[k].weight /= totalValue
	}
	return &f, classes
}

// demoSegmentSums adds up the demo's segment list per class and state
// with encoding/csv and exact rationals: a state name, or the state whose
// index range holds the condition value (the demo's values are whole
// numbers, so no value sits on a shared end).
func demoSegmentSums(t *testing.T, path string, f *demoFile) map[string]map[string]*big.Rat {
	t.Helper()
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	rows, err := csv.NewReader(fh).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	scaleOf := map[string]string{}
	for _, fc := range f.Classes {
		scaleOf[fc.Name] = fc.Scale
	}
	out := map[string]map[string]*big.Rat{}
	for _, row := range rows[1:] {
		class, cond := row[col["class"]], row[col["condition"]]
		states := f.Scales[scaleOf[class]].States
		state := ""
		for _, st := range states {
			if st.Name == cond {
				state = st.Name
			}
		}
		if state == "" {
			v, err := strconv.ParseFloat(cond, 64)
			if err != nil {
				t.Fatalf("%s: condition %q", row[col["id"]], cond)
			}
			for _, st := range states {
				if v >= st.Min && v <= st.Max {
					state = st.Name
				}
			}
		}
		q, ok := new(big.Rat).SetString(row[col["quantity"]])
		if !ok || state == "" {
			t.Fatalf("%s: quantity %q, condition %q", row[col["id"]], row[col["quantity"]], cond)
		}
		if out[class] == nil {
			out[class] = map[string]*big.Rat{}
		}
		if out[class][state] == nil {
			out[class][state] = new(big.Rat)
		}
		out[class][state].Add(out[class][state], q)
	}
	return out
}

// stepBy is one year of the chain written out: out_j = sum_i q_i P_ij.
func stepBy(q []float64, p [][]float64) []float64 {
	out := make([]float64, len(q))
	for i, qi := range q {
		for j, pij := range p[i] {
			out[j] += qi * pij
		}
	}
	return out
}

func sum(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x
	}
	return s
}

func quantities(t *testing.T, c demoClass, cc scenarios.ClassCondition) []float64 {
	t.Helper()
	if cc.Class != c.name || len(cc.States) != len(c.states) {
		t.Fatalf("result class %q with %d states, want %q with %d", cc.Class, len(cc.States), c.name, len(c.states))
	}
	q := make([]float64, len(cc.States))
	for i, s := range cc.States {
		if s.State != c.states[i] {
			t.Fatalf("class %s: state %d is %q, want %q (scale order, best first)", c.name, i, s.State, c.states[i])
		}
		q[i] = s.Quantity
	}
	return q
}

// groupShare is the share of quantity q in a group, by definition.
func groupShare(c demoClass, q []float64, group string) float64 {
	s := 0.0
	for i, v := range q {
		if c.groups[i] == group {
			s += v
		}
	}
	return s / sum(q)
}

// classScore maps the quantity-weighted average index onto 0 (worst end) -
// 100 (best end), the package's definition of the condition score (doc.go).
func classScore(c demoClass, q []float64) float64 {
	avg := 0.0
	for i, v := range q {
		avg += v * c.values[i]
	}
	avg /= sum(q)
	return 100 * (avg - c.worst) / (c.best - c.worst)
}

func networkPoor(classes []demoClass, qs [][]float64) float64 {
	s := 0.0
	for k, c := range classes {
		s += c.weight * groupShare(c, qs[k], "poor")
	}
	return s
}

func networkScore(classes []demoClass, qs [][]float64) float64 {
	s := 0.0
	for k, c := range classes {
		s += c.weight * classScore(c, qs[k])
	}
	return s
}

// loadDemoText loads an edited copy of the demo, beside the demo's segment
// list (a scenario that names files must be loaded from a file system).
func loadDemoText(t *testing.T, name, text string) (*scenarios.Scenario, error) {
	t.Helper()
	fsys := fstest.MapFS{name: {Data: []byte(text)}}
	entries, err := os.ReadDir(filepath.Dir(demoPath))
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if strings.HasSuffix(e.Name(), ".csv") {
			data, err := os.ReadFile(filepath.Join(filepath.Dir(demoPath), e.Name()))
			if err != nil {
				t.Fatal(err)
			}
			fsys[e.Name()] = &fstest.MapFile{Data: data}
		}
	}
	return scenarios.Load(fsys, name)
}

func loadDemo(t *testing.T) *scenarios.Scenario {
	t.Helper()
	sc, err := scenarios.LoadFile(demoPath)
	if err != nil {
		t.Fatalf("demo does not load: %v", err)
	}
	return sc
}

func TestForecastDemoMatchesHandRoll(t *testing.T) {
	f, classes := readDemo(t, demoPath)
	r, err := scenarios.Forecast(loadDemo(t))
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Years) != f.Horizon {
		t.Fatalf("%d years, want %d", len(r.Years), f.Horizon)
	}
	for k, c := range classes {
		q := c.initial
		wantClose(t, c.name+" today", quantities(t, c, r.Initial.Classes[k]), q, 1e-12*sum(q))
		for y := 0; y < f.Horizon; y++ {
			q = stepBy(q, c.p)
			cc := r.Years[y].Classes[k]
			what := fmt.Sprintf("%s end of %d", c.name, r.Years[y].Year)
			if r.Years[y].Year != f.StartYear+y {
				t.Fatalf("year %d labelled %d", y+1, r.Years[y].Year)
			}
			wantClose(t, what, quantities(t, c, cc), q, 1e-9*sum(q))
			// Average index: quantity-weighted mean of the states'
			// representative values (docs/model.md, Condition scales).
			avg := 0.0
			for i, v := range q {
				avg += v * c.values[i]
			}
			avg /= sum(q)
			if !near(cc.AverageIndex, avg, 1e-9*math.Abs(avg)) {
				t.Errorf("%s: average index %g, want %g", what, cc.AverageIndex, avg)
			}
			for _, g := range []struct {
				name string
				got  float64
			}{{"good", cc.Shares.Good}, {"fair", cc.Shares.Fair}, {"poor", cc.Shares.Poor}} {
				if want := groupShare(c, q, g.name); !near(g.got, want, 1e-12) {
					t.Errorf("%s: %s share %g, want %g", what, g.name, g.got, want)
				}
			}
			if cc.Work != nil || cc.Spend != nil {
				t.Errorf("%s: a forecast has work %v / spend %v", what, cc.Work, cc.Spend)
			}
		}
	}
	if r.TotalCost != 0 || r.Status != "do-nothing" {
		t.Errorf("forecast status %q cost %g, want do-nothing and 0", r.Status, r.TotalCost)
	}
}

func wantClose(t *testing.T, what string, got, want []float64, tol float64) {
	t.Helper()
	for i := range want {
		if !near(got[i], want[i], tol) {
			t.Errorf("%s: %v, want %v", what, got, want)
			return
		}
	}
}

func TestPlanDemo(t *testing.T) {
	f, classes := readDemo(t, demoPath)
	r, err := scenarios.Plan(loadDemo(t), scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != "optimal" {
		t.Fatalf("status %q, want optimal (the demo is built to be feasible)", r.Status)
	}
	if len(r.Years) != f.Horizon {
		t.Fatalf("%d years, want %d", len(r.Years), f.Horizon)
	}
	// LP answers hold to the solver's tolerance; 1e-6 relative is far
	// below anything a report shows (common practice, no source).
	const rel = 1e-6
	budget := f.Budget.Yearly
	prev := make([][]float64, len(classes))
	for k, c := range classes {
		prev[k] = quantities(t, c, r.Initial.Classes[k])
		wantClose(t, c.name+" today", prev[k], c.initial, 0)
	}
	qs := make([][][]float64, f.Horizon) // qs[y][k] = end-of-year quantities
	total := 0.0
	for y, yr := range r.Years {
		esc := math.Pow(1+f.CostEscalation, float64(y)) // prices of year y+1 (docs/model.md, Money)
		if yr.Budget == nil || *yr.Budget != budget {
			t.Errorf("%d: budget %v, want %g", yr.Year, yr.Budget, budget)
		}
		if yr.Spend > budget*(1+rel) {
			t.Errorf("%d: spend %.2f exceeds the budget %.0f", yr.Year, yr.Spend, budget)
		}
		spend := 0.0
		qs[y] = make([][]float64, len(classes))
		for k, c := range classes {
			cc := yr.Classes[k]
			q := quantities(t, c, cc)
			qs[y][k] = q
			what := fmt.Sprintf("%s %d", c.name, yr.Year)
			// Quantity is conserved: work moves it between states only.
			if tot := sum(c.initial); !near(sum(q), tot, rel*tot) {
				t.Errorf("%s: total quantity %g, want %g", what, sum(q), tot)
			}
			// Rebuild the year from the work list: what is treated follows
			// its treatment's row, the rest ages by P (docs/model.md, Flows).
			untreated := append([]float64(nil), prev[k]...)
			end := make([]float64, len(q))
			classSpend := 0.0
			for _, w := range cc.Work {
				i := indexOf(c.states, w.State)
				rows, ok := c.rows[w.Treatment]
				if i < 0 || !ok || rows[i] == nil {
					t.Fatalf("%s: work %+v is not a treatment of the class applicable to that state", what, w)
				}
				if w.Quantity < 0 {
					t.Errorf("%s: negative quantity in %+v", what, w)
				}
				untreated[i] -= w.Quantity
				for j, pj := range rows[i] {
					end[j] += w.Quantity * pj
				}
				if want := w.Quantity * c.cost[w.Treatment][i] * esc; !near(w.Cost, want, rel*math.Max(want, 1)) {
					t.Errorf("%s: %s on %s costs %g, want quantity x unit cost x escalation = %g", what, w.Treatment, w.State, w.Cost, want)
				}
				classSpend += w.Cost
			}
			for i, u := range untreated {
				if u < -rel*sum(c.initial) {
					t.Errorf("%s: more %s treated than there was at the start of the year (%g short)", what, c.states[i], -u)
				}
				for j, pij := range c.p[i] {
					end[j] += math.Max(u, 0) * pij
				}
			}
			wantClose(t, what+" condition rebuilt from the work list", q, end, rel*sum(c.initial))
			if cc.Spend == nil || !near(*cc.Spend, classSpend, rel*math.Max(classSpend, 1)) {
				t.Errorf("%s: class spend %v, want the sum of its work %g", what, cc.Spend, classSpend)
			}
			spend += classSpend
			prev[k] = q
		}
		if !near(yr.Spend, spend, rel*math.Max(spend, 1)) {
			t.Errorf("%d: spend %g, want the sum of the work %g", yr.Year, yr.Spend, spend)
		}
		total += yr.Spend
	}
	if !near(r.TotalCost, total, rel*total) {
		t.Errorf("total cost %g, want the sum of yearly spend %g", r.TotalCost, total)
	}

	// The demo's targets, evaluated on the year-by-year condition above
	// rather than read from TargetOutcome.Met.
	if len(f.Targets) != 2 || len(r.Targets) != 2 {
		t.Fatalf("the demo has %d targets (result %d); this test evaluates the network max-share and hold targets", len(f.Targets), len(r.Targets))
	}
	initial := make([][]float64, len(classes))
	for k, c := range classes {
		initial[k] = c.initial
	}
	for n, tg := range f.Targets {
		switch {
		case tg.Hold && tg.Class == "":
			// End-of-horizon network score no lower than today's.
			last, today := networkScore(classes, qs[f.Horizon-1]), networkScore(classes, initial)
			if last < today-1e-7 {
				t.Errorf("hold: network score %g at the end, below today's %g", last, today)
			}
			if !near(r.Years[f.Horizon-1].Network.Score, last, 1e-7) {
				t.Errorf("hold: result network score %g, recomputed %g", r.Years[f.Horizon-1].Network.Score, last)
			}
		case tg.Class == "all" && tg.Group == "poor" && tg.MaxShare != nil:
			to := tg.ToYear
			if to == 0 {
				to = f.StartYear + f.Horizon - 1
			}
			for y := tg.FromYear; y <= to; y++ {
				share := networkPoor(classes, qs[y-f.StartYear])
				if share > *tg.MaxShare+1e-7 {
					t.Errorf("%d: network poor share %g above the target %g", y, share, *tg.MaxShare)
				}
				if got := r.Years[y-f.StartYear].Network.Shares.Poor; !near(got, share, 1e-9) {
					t.Errorf("%d: result network poor share %g, recomputed %g", y, got, share)
				}
			}
		default:
			t.Fatalf("target %d of the demo is of a kind this test does not evaluate: %+v", n, tg)
		}
		if !r.Targets[n].Met {
			t.Errorf("target %q reported not met, but it holds", r.Targets[n].Target)
		}
	}
}

func indexOf(list []string, s string) int {
	for i, v := range list {
		if v == s {
			return i
		}
	}
	return -1
}

// jsonKeys returns the keys of a JSON object in the order written.
func jsonKeys(t *testing.T, raw json.RawMessage) []string {
	t.Helper()
	dec := json.NewDecoder(bytes.NewReader(raw))
	if tok, err := dec.Token(); err != nil || tok != json.Delim('{') {
		t.Fatalf("want a JSON object, got %s", raw)
	}
	var keys []string
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			t.Fatal(err)
		}
		keys = append(keys, tok.(string))
		var skip json.RawMessage
		if err := dec.Decode(&skip); err != nil {
			t.Fatal(err)
		}
	}
	return keys
}

func TestPlanDemoJSONContract(t *testing.T) {
	_, classes := readDemo(t, demoPath)
	r, err := scenarios.Plan(loadDemo(t), scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	out, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	// Field names of the JSON output (docs/json.md, plan and forecast).
	var doc map[string]any
	if err := json.Unmarshal(out, &doc); err != nil {
		t.Fatal(err)
	}
	isNum := func(v any) bool { _, ok := v.(float64); return ok }
	if s, _ := doc["status"].(string); s != "optimal" {
		t.Errorf("status %v, want \"optimal\"", doc["status"])
	}
	for _, key := range []string{"total_cost", "condition_score"} {
		if !isNum(doc[key]) {
			t.Errorf("%s: %v, want a number", key, doc[key])
		}
	}
	checkClass := func(where string, m map[string]any, plan bool) {
		if _, ok := m["class"].(string); !ok {
			t.Errorf("%s: class %v, want text", where, m["class"])
		}
		states, ok := m["states"].(map[string]any)
		if !ok || len(states) == 0 {
			t.Errorf("%s: states %v, want an object of quantities", where, m["states"])
		}
		for name, q := range states {
			if !isNum(q) {
				t.Errorf("%s: states.%s = %v, want a number", where, name, q)
			}
		}
		if !isNum(m["average_index"]) {
			t.Errorf("%s: average_index %v, want a number", where, m["average_index"])
		}
		sh, ok := m["shares"].(map[string]any)
		if !ok {
			t.Errorf("%s: shares %v, want an object", where, m["shares"])
		} else {
			tot := 0.0
			for _, g := range []string{"good", "fair", "poor"} {
				v, ok := sh[g].(float64)
				if !ok {
					t.Errorf("%s: shares.%s = %v, want a number", where, g, sh[g])
				}
				tot += v
			}
			if !near(tot, 1, 1e-9) {
				t.Errorf("%s: shares add up to %g, want 1", where, tot)
			}
		}
		if !plan {
			return
		}
		work, ok := m["work"].([]any)
		if !ok {
			t.Errorf("%s: work %v, want a list (empty when nothing is done)", where, m["work"])
			return
		}
		for _, w := range work {
			wm, _ := w.(map[string]any)
			_, okT := wm["treatment"].(string)
			_, okS := wm["state"].(string)
			if !okT || !okS || !isNum(wm["quantity"]) || !isNum(wm["cost"]) {
				t.Errorf("%s: work item %v, want treatment, state, quantity, cost", where, w)
			}
		}
	}
	initial, _ := doc["initial"].(map[string]any)
	ic, _ := initial["classes"].([]any)
	if len(ic) != len(classes) {
		t.Fatalf("initial.classes has %d entries, want %d", len(ic), len(classes))
	}
	for k, c := range ic {
		m, _ := c.(map[string]any)
		checkClass(fmt.Sprintf("initial.classes[%d]", k), m, false)
	}
	years, _ := doc["years"].([]any)
	if len(years) != len(r.Years) || len(years) == 0 {
		t.Fatalf("years has %d entries, want %d", len(years), len(r.Years))
	}
	for y, v := range years {
		ym, _ := v.(map[string]any)
		where := fmt.Sprintf("years[%d]", y)
		for _, key := range []string{"year", "spend", "budget"} {
			if !isNum(ym[key]) {
				t.Errorf("%s.%s = %v, want a number", where, key, ym[key])
			}
		}
		cs, _ := ym["classes"].([]any)
		if len(cs) != len(classes) {
			t.Fatalf("%s.classes has %d entries, want %d", where, len(cs), len(classes))
		}
		for k, c := range cs {
			m, _ := c.(map[string]any)
			checkClass(fmt.Sprintf("%s.classes[%d]", where, k), m, true)
		}
	}

	// states keys in the scale's order, best first.
	var ordered struct {
		Initial struct {
			Classes []struct {
				States json.RawMessage `json:"states"`
			} `json:"classes"`
		} `json:"initial"`
		Years []struct {
			Classes []struct {
				States json.RawMessage `json:"states"`
			} `json:"classes"`
		} `json:"years"`
	}
	if err := json.Unmarshal(out, &ordered); err != nil {
		t.Fatal(err)
	}
	raws := []json.RawMessage{}
	for _, c := range ordered.Initial.Classes {
		raws = append(raws, c.States)
	}
	for _, y := range ordered.Years {
		for _, c := range y.Classes {
			raws = append(raws, c.States)
		}
	}
	for n, raw := range raws {
		c := classes[n%len(classes)]
		if got := strings.Join(jsonKeys(t, raw), "|"); got != strings.Join(c.states, "|") {
			t.Errorf("%s: states keys %s, want the scale's order %s", c.name, got, strings.Join(c.states, "|"))
		}
	}
}

func TestPlanDemoDeterministic(t *testing.T) {
	var outs [2][]byte
	for n := range outs {
		r, err := scenarios.Plan(loadDemo(t), scenarios.Options{})
		if err != nil {
			t.Fatal(err)
		}
		if outs[n], err = json.Marshal(r); err != nil {
			t.Fatal(err)
		}
	}
	if !bytes.Equal(outs[0], outs[1]) {
		i := 0
		for i < len(outs[0]) && i < len(outs[1]) && outs[0][i] == outs[1][i] {
			i++
		}
		lo := max(i-80, 0)
		t.Fatalf("same input, different JSON; first difference at byte %d:\n%s\n%s",
			i, outs[0][lo:min(i+80, len(outs[0]))], outs[1][lo:min(i+80, len(outs[1]))])
	}
}

func TestPlanImpossibleTarget(t *testing.T) {
	data, err := os.ReadFile(demoPath)
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	replace := func(old, new string) {
		if strings.Count(text, old) != 1 {
			t.Fatalf("demo no longer contains %q exactly once; update this test", old)
		}
		text = strings.Replace(text, old, new, 1)
	}
	// No poor quantity at all from the end of the first year, on a small
	// budget: with a third of the network poor today this cannot be done.
	replace("yearly: 4500000", "yearly: 100000")
	replace("  - {class: all, group: poor, max_share: 0.15, from_year: 2031}\n  - {hold: true}\n",
		"  - {class: all, group: poor, max_share: 0, from_year: 2027}\n")
	sc, err := loadDemoText(t, "impossible.yaml", text)
	if err != nil {
		t.Fatal(err)
	}
	r, err := scenarios.Plan(sc, scenarios.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != "targets-not-met" {
		t.Fatalf("status %q, want targets-not-met", r.Status)
	}
	if len(r.Targets) != 1 {
		t.Fatalf("%d target outcomes, want 1", len(r.Targets))
	}
	o := r.Targets[0]
	if !strings.Contains(o.Target, "poor") || !strings.Contains(o.Target, "at most 0%") || o.Met {
		t.Errorf("outcome %+v, want the poor-share target, not met", o)
	}
	if len(o.Shortfalls) == 0 {
		t.Fatalf("no shortfall reported for %q", o.Target)
	}
	// The least total slack makes each year's shortfall the poor share
	// itself (the limit is 0); this follows from the elastic model's
	// definition (docs/model.md, Elastic diagnosis).
	_, classes := readDemo(t, demoPath)
	byYear := map[int]float64{}
	for _, s := range o.Shortfalls {
		byYear[s.Year] = s.Amount
	}
	for y, yr := range r.Years {
		if yr.Spend > 100000*(1+1e-6) {
			t.Errorf("%d: spend %g above the 100,000 budget", yr.Year, yr.Spend)
		}
		qs := make([][]float64, len(classes))
		for k, c := range classes {
			qs[k] = quantities(t, c, yr.Classes[k])
		}
		share := networkPoor(classes, qs)
		got, ok := byYear[yr.Year]
		if share > 1e-6 && (!ok || !near(got, share, 1e-6)) {
			t.Errorf("%d (year %d): poor share %g, shortfall %g (reported %v); want the share", yr.Year, y+1, share, got, ok)
		}
	}
}
