package scenarios

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"wearplan/markov"
)

// fitFileHeader opens every fit file.
const fitFileHeader = `wearplan fit result (format 1). Written by "wearplan fit"; the schema is in wearplan's docs/json.md.
A scenario class uses a matrix from this file with
  deterioration: {fit: THIS-FILE.yaml}            # the class of the same name
  deterioration: {fit: THIS-FILE.yaml, fit_class: NAME}
  deterioration: {fit: THIS-FILE.yaml, family: FAMILY}     # a class fitted by family
  deterioration: {fit: THIS-FILE.yaml, at: "aadt=5000"}    # a covariate model's matrix
or paste a class's deterioration block into the scenario. A class fitted by
family that names none is split by the family column of its segment list.`

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
	data, err := readInput(fsys, name, MaxFileSize, nil)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, &InputError{Issues: []*Issue{{File: name, Msg: "fit file not found; write it with wearplan fit ... --save " + name + " (next to the scenario)"}}}
		}
		return nil, &InputError{Issues: []*Issue{{File: name, Msg: "the fit file " + describeOpenError(err)}}}
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
		checkCovariateMatrices(fc, fc.States, field, is)
		for f := range fc.Families {
			fam := fc.Families[f] // a copy: families share the class's states
			fam.States = fc.States
			ffield := fmt.Sprintf("%s.families[%d] (%s)", field, f, fam.Family)
			checkFitMatrix(&fam, ffield, is)
			checkCovariateMatrices(&fam, fc.States, ffield, is)
		}
	}
	if err := is.err(); err != nil {
		return nil, err
	}
	return &r, nil
}

// checkCovariateMatrices checks the matrices of a covariate model.
func checkCovariateMatrices(fc *FitClass, states []string, field string, is *issues) {
	if fc.Covariates == nil {
		return
	}
	for k, at := range fc.Covariates.At {
		checkFitMatrix(&FitClass{States: states, Deterioration: at.Deterioration, Lines: fc.Lines}, fmt.Sprintf("%s.covariates.at[%d] (%s)", field, k, at.Name), is)
	}
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
		if d == nil || (d.Fit == "" && d.FitClass == "" && d.Family == "" && d.At == "") {
			continue
		}
		field := fmt.Sprintf("classes[%d] (%s).deterioration", k, strings.TrimSpace(fc.Name))
		line := d.Lines.of("fit")
		switch {
		case d.Fit == "":
			key := "fit_class"
			switch {
			case d.Family != "":
				key = "family"
			case d.At != "":
				key = "at"
			}
			is.add(d.Lines.of(key), field+"."+key, "%s needs fit: FILE (the fit file to take the class from)", key)
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
		chosen, ok := chooseFamily(fitted, d, got.r, want, field, is)
		if !ok {
			continue
		}
		block, evidence := chosen.Deterioration, evidenceOf(got.r, chosen, d.Fit)
		if at := strings.TrimSpace(d.At); at != "" && d.split == nil {
			m, ok := covariatesAt(chosen, at, d, want, field, is)
			if !ok {
				continue
			}
			// The matrix at chosen covariate values is not the counting
			// or bootstrap estimate the evidence describes.
			block, evidence = m, nil
		}
		rows := make([]int, len(block.Matrix))
		for i := range rows {
			rows[i] = line
		}
		d.Matrix = &matrix{Rows: block.Matrix, Lines: rows, Line: line}
		d.AllowImprovement = block.AllowImprovement
		d.evidence = evidence
	}
	return read
}

// chooseFamily picks the part of a fitted class a deterioration block
// names: the family it names (family: NAME, a family or a value merged
// into one; all for the class's own matrix), or, when the class was fitted
// by family and none is named, the class's own matrix for now with the
// families kept to split the class by its segment list (splitFamilies).
func chooseFamily(fitted *FitClass, d *fileDeterioration, r *FitResult, class, field string, is *issues) (*FitClass, bool) {
	line := d.Lines.of("fit")
	name := strings.TrimSpace(d.Family)
	switch {
	case name == "all":
		return fitted, true
	case name != "" && len(fitted.Families) == 0:
		is.add(d.Lines.of("family"), field+".family", "class %q in %q was not fitted by family (fit it with --by COLUMN); drop family:", class, d.Fit)
		return nil, false
	case name != "":
		for k := range fitted.Families {
			if f := &fitted.Families[k]; f.Family == name || slices.Contains(f.Members, name) {
				return f, true
			}
		}
		split := &familySplit{families: familyPointers(fitted)}
		is.add(d.Lines.of("family"), field+".family", "class %q in %q has no family %q; its families (by %s) are %s, or all for the class's own matrix", class, d.Fit, name, strings.Join(fitted.By, "/"), split.names())
		return nil, false
	case len(fitted.Families) > 0:
		d.split = &familySplit{file: d.Fit, fitClass: class, by: fitted.By, families: familyPointers(fitted), result: r, line: line, at: strings.TrimSpace(d.At)}
		if d.split.at != "" {
			// Every family must have the matrix at those values.
			for _, f := range d.split.families {
				if _, ok := covariatesAt(f, d.split.at, d, class, field, is); !ok {
					return nil, false
				}
			}
		}
	}
	return fitted, true
}

// covariatesAt returns the matrix of a fitted class's (or family's)
// covariate model at the named values (at: NAME).
func covariatesAt(c *FitClass, at string, d *fileDeterioration, class, field string, is *issues) (FitDeterioration, bool) {
	who := fmt.Sprintf("class %q", class)
	if c.Family != "" {
		who = fmt.Sprintf("family %q of class %q", c.Family, class)
	}
	if c.Covariates == nil {
		is.add(d.Lines.of("at"), field+".at", "%s in %q has no covariate model (fit it with --covariate COLUMN); drop at:", who, d.Fit)
		return FitDeterioration{}, false
	}
	var names []string
	for _, p := range c.Covariates.At {
		if p.Name == at {
			return p.Deterioration, true
		}
		names = append(names, strconv.Quote(p.Name))
	}
	is.add(d.Lines.of("at"), field+".at", "%s in %q has no matrix at %q; it has %s (fit again with --at to add others)", who, d.Fit, at, strings.Join(names, ", "))
	return FitDeterioration{}, false
}

func familyPointers(c *FitClass) []*FitClass {
	out := make([]*FitClass, len(c.Families))
	for k := range c.Families {
		out[k] = &c.Families[k]
	}
	return out
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
