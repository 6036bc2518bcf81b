package scenarios

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"reflect"
	"slices"
	"strings"

	"gopkg.in/yaml.v3"

	"wearplan/markov"
)

// fitFileHeader opens every fit file.
const fitFileHeader = `wearplan fit result (format 1). Written by "wearplan fit"; the schema is in wearplan's docs/json.md.
A scenario class uses a matrix from this file with
  deterioration: {fit: THIS-FILE.yaml}            # the class of the same name
  deterioration: {fit: THIS-FILE.yaml, fit_class: NAME}
or paste a class's deterioration block into the scenario.`

// WriteFitFile writes a fit result as YAML: the fit file a scenario can
// name. Lists of numbers are written on one line each (a matrix row per
// line), everything else in block style, fields in a fixed order.
func WriteFitFile(w io.Writer, r *FitResult) error {
	var doc yaml.Node
	if err := doc.Encode(r); err != nil {
		return fmt.Errorf("encoding the fit result: %w", err)
	}
	flowNumbers(&doc, "")
	doc.HeadComment = fitFileHeader
	enc := yaml.NewEncoder(w)
	enc.SetIndent(2)
	if err := enc.Encode(&doc); err != nil {
		return err
	}
	return enc.Close()
}

// flowNumbers writes lists of numbers, and the list of state names, in
// flow style ([a, b, c]).
func flowNumbers(n *yaml.Node, key string) {
	if n.Kind == yaml.SequenceNode && len(n.Content) > 0 {
		flow := true
		for _, c := range n.Content {
			if c.Kind != yaml.ScalarNode || (key != "states" && c.Tag != "!!int" && c.Tag != "!!float") {
				flow = false
				break
			}
		}
		if flow {
			n.Style = yaml.FlowStyle
			return
		}
	}
	if n.Kind == yaml.MappingNode {
		for i := 0; i+1 < len(n.Content); i += 2 {
			flowNumbers(n.Content[i+1], n.Content[i].Value)
		}
		return
	}
	for _, c := range n.Content {
		flowNumbers(c, key)
	}
}

// decodeNode reads the deterioration block of a fit file and remembers
// the line of each matrix row for messages.
func (fd *FitDeterioration) decodeNode(d *decoder, n *yaml.Node, path string) {
	d.decodeStruct(n, reflect.ValueOf(fd).Elem(), path)
	for _, kl := range mappingKeys(n) {
		if kl.key == "matrix" {
			for _, row := range resolve(kl.val).Content {
				fd.rowLines = append(fd.rowLines, resolve(row).Line)
			}
		}
	}
}

// ReadFitFile reads and checks a fit file from fsys. Problems are
// reported with the file's name and lines in an *InputError.
func ReadFitFile(fsys fs.FS, name string) (*FitResult, error) {
	data, err := fs.ReadFile(fsys, name)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, &InputError{Issues: []*Issue{{File: name, Msg: "fit file not found; write it with wearplan fit ... --save " + name + " (next to the scenario)"}}}
		}
		return nil, &InputError{Issues: []*Issue{{File: name, Msg: fmt.Sprintf("cannot read the fit file: %v", err)}}}
	}
	root, err := parseNode(name, data)
	if err != nil {
		return nil, err
	}
	is := &issues{file: name}
	var r FitResult
	d := &decoder{issues: is}
	d.decode(root, reflect.ValueOf(&r).Elem(), "")
	if err := is.err(); err != nil {
		return nil, err
	}
	if r.Format != FitFormat {
		is.add(r.Lines.of("wearplan_fit"), "wearplan_fit", "format %d; this wearplan reads fit files of format %d (fit again with this version)", r.Format, FitFormat)
		return nil, is.err()
	}
	if len(r.Classes) == 0 {
		is.add(r.Lines.of("classes"), "classes", "no classes; fit again")
	}
	for k := range r.Classes {
		fc := &r.Classes[k]
		field := fmt.Sprintf("classes[%d] (%s)", k, fc.Class)
		checkFitMatrix(fc, field, is)
	}
	if err := is.err(); err != nil {
		return nil, err
	}
	return &r, nil
}

func checkFitMatrix(fc *FitClass, field string, is *issues) {
	m := fc.Deterioration.Matrix
	fld := field + ".deterioration.matrix"
	line := fc.Deterioration.Lines.of("matrix")
	if len(fc.States) < 2 {
		is.add(fc.Lines.of("states"), field+".states", "%d states; a fitted class lists at least 2, best first", len(fc.States))
		return
	}
	if len(m) != len(fc.States) {
		is.add(line, fld, "%d rows for %d states; give one row per state, best first", len(m), len(fc.States))
		return
	}
	_, err := markov.NewTransition(m, markov.Options{AllowImprovement: fc.Deterioration.AllowImprovement})
	for _, e := range flatten(err) {
		if e == nil {
			continue
		}
		var ee *markov.EntryError
		if errors.As(e, &ee) {
			l := line
			if ee.Row < len(fc.Deterioration.rowLines) {
				l = fc.Deterioration.rowLines[ee.Row]
			}
			msg := ee.Reason
			if ee.Col >= 0 && ee.Col < len(fc.States) {
				msg = fmt.Sprintf("from %q to %q: %s", fc.States[ee.Row], fc.States[ee.Col], ee.Reason)
			}
			is.add(l, fmt.Sprintf("%s[%d]", fld, ee.Row), "%s", msg)
			continue
		}
		is.add(line, fld, "%v", e)
	}
}

// addAll copies the issues of an *InputError (from another file).
func (s *issues) addAll(err error) {
	var ie *InputError
	if !errors.As(err, &ie) {
		s.add(0, "", "%v", err)
		return
	}
	for _, e := range ie.Issues {
		if s.seen == nil {
			s.seen = map[Issue]bool{}
		}
		if !s.seen[*e] {
			s.seen[*e] = true
			s.list = append(s.list, e)
		}
	}
}

// resolveFits reads the fit files that classes name in their
// deterioration (fit: FILE, optionally fit_class: NAME), checks that each
// was fitted on the class's states, and puts its matrix in place, so that
// the rest of the checks treat it like a matrix written inline. Paths are
// relative to the scenario's folder (fsys). Problems are added to is.
func resolveFits(f *fileScenario, fsys fs.FS, is *issues) (read []string) {
	type loaded struct {
		r   *FitResult
		err error
	}
	cache := map[string]loaded{}
	for k := range f.Classes {
		fc := &f.Classes[k]
		d := fc.Deterioration
		if d == nil || (d.Fit == "" && d.FitClass == "") {
			continue
		}
		field := fmt.Sprintf("classes[%d] (%s).deterioration", k, strings.TrimSpace(fc.Name))
		line := d.Lines.of("fit")
		switch {
		case d.Fit == "":
			is.add(d.Lines.of("fit_class"), field+".fit_class", "fit_class needs fit: FILE (the fit file to take the class from)")
			continue
		case d.Matrix != nil || d.YearsInState != nil:
			is.add(d.Lines.of(""), field, "give one of fit, matrix or years_in_state")
			continue
		case d.AllowImprovement:
			is.add(d.Lines.of("allow_improvement"), field+".allow_improvement", "comes from the fit file with fit:; drop it here")
			continue
		case fsys == nil:
			is.add(line, field+".fit", "fit files are read from the scenario's folder; load the scenario from a file")
			continue
		case !fs.ValidPath(d.Fit):
			is.add(line, field+".fit", "%q: give a path inside the scenario's folder (no leading /, no ..); put the fit file next to the scenario or in a subfolder", d.Fit)
			continue
		}
		got, ok := cache[d.Fit]
		if !ok {
			got.r, got.err = ReadFitFile(fsys, d.Fit)
			cache[d.Fit] = got
			if got.err != nil {
				is.addAll(got.err)
			} else {
				read = append(read, d.Fit)
			}
		}
		if got.err != nil {
			is.add(line, field+".fit", "the fit file %q cannot be used (its problems are listed under its name)", d.Fit)
			continue
		}
		want := strings.TrimSpace(fc.Name)
		if d.FitClass != "" {
			want = d.FitClass
		}
		var fitted *FitClass
		var names []string
		for i := range got.r.Classes {
			names = append(names, got.r.Classes[i].Class)
			if got.r.Classes[i].Class == want {
				fitted = &got.r.Classes[i]
			}
		}
		if fitted == nil {
			is.add(line, field+".fit", "fit file %q has no class %q; it has %s; name one with fit_class:", d.Fit, want, strings.Join(names, ", "))
			continue
		}
		if sc, defined := f.Scales[fc.Scale]; defined {
			var states []string
			for _, st := range sc.States {
				states = append(states, st.Name)
			}
			if !slices.Equal(states, fitted.States) {
				is.add(line, field+".fit", "class %q in %q was fitted on the states %s, but scale %q has %s; fit again with this scenario's scale", want, d.Fit, strings.Join(fitted.States, ", "), fc.Scale, strings.Join(states, ", "))
				continue
			}
		}
		rows := make([]int, len(fitted.Deterioration.Matrix))
		for i := range rows {
			rows[i] = line
		}
		d.Matrix = &matrix{Rows: fitted.Deterioration.Matrix, Lines: rows, Line: line}
		d.AllowImprovement = fitted.Deterioration.AllowImprovement
		d.evidence = evidenceOf(got.r, fitted, d.Fit)
	}
	return read
}

// DeteriorationBlock returns the class's deterioration block as YAML
// ready to paste under a scenario class (indented by indent spaces).
func (fc *FitClass) DeteriorationBlock(indent int) (string, error) {
	var n yaml.Node
	if err := n.Encode(struct {
		D FitDeterioration `yaml:"deterioration"`
	}{fc.Deterioration}); err != nil {
		return "", err
	}
	flowNumbers(&n, "")
	var b strings.Builder
	enc := yaml.NewEncoder(&b)
	enc.SetIndent(2)
	if err := enc.Encode(&n); err != nil {
		return "", err
	}
	if err := enc.Close(); err != nil {
		return "", err
	}
	pad := strings.Repeat(" ", indent)
	lines := strings.Split(strings.TrimRight(b.String(), "\n"), "\n")
	for i := range lines {
		lines[i] = pad + lines[i]
	}
	return strings.Join(lines, "\n") + "\n", nil
}

// evidenceOf keeps what a fit file says about how a class's matrix was
// estimated, for simulations that draw it: the one-year transition counts,
// the moves the fit allowed, and the bootstrap replicates (those that are
// not valid transition matrices are dropped; a fit file written by wearplan
// has none).
func evidenceOf(r *FitResult, c *FitClass, file string) *MatrixEvidence {
	n := len(c.States)
	st := markov.Structure{OneStep: r.OneStep, Improvement: c.Deterioration.AllowImprovement}
	ev := &MatrixEvidence{Source: file, Allowed: make([][]bool, n)}
	for i := range ev.Allowed {
		ev.Allowed[i] = make([]bool, n)
		for j := range ev.Allowed[i] {
			ev.Allowed[i][j] = st.Allowed(i, j, n)
		}
	}
	for _, fc := range c.Counts {
		if fc.Years == 1 && len(fc.Rows) == n {
			ev.Counts = fc.Rows
		}
	}
	if c.Bootstrap != nil {
		for _, rows := range c.Bootstrap.Replicates {
			if t, err := markov.NewTransition(rows, markov.Options{AllowImprovement: st.Improvement}); err == nil {
				ev.Replicates = append(ev.Replicates, t)
			}
		}
	}
	return ev
}
