package scenarios

import (
	"fmt"
	"math"
	"reflect"
	"sort"
	"strings"

	"gopkg.in/yaml.v3"
)

// The scenario file is decoded from yaml.v3's node tree by a small strict
// decoder instead of yaml.Unmarshal, so that every problem (unknown key,
// wrong type, duplicate key) is reported at once, with its line and the
// dotted path of the field, in words a planner can act on.

// lines records where each key of a mapping was written: key -> line of its
// value; "" -> line of the mapping itself. A struct that has a field of this
// type named Lines gets it filled.
type lines map[string]int

func (l lines) of(key string) int {
	if v, ok := l[key]; ok {
		return v
	}
	return l[""]
}

// nodeDecoder is implemented by types that accept more than one YAML shape
// (a number or a list, a number or a map...).
type nodeDecoder interface {
	decodeNode(d *decoder, n *yaml.Node, path string)
}

type decoder struct {
	*issues
}

var nodeDecoderType = reflect.TypeOf((*nodeDecoder)(nil)).Elem()

func resolve(n *yaml.Node) *yaml.Node {
	for n != nil && n.Kind == yaml.AliasNode {
		n = n.Alias
	}
	return n
}

func kindName(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping (key: value lines)"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		if n.Tag == "!!null" {
			return "nothing"
		}
		return fmt.Sprintf("%q", n.Value)
	}
	return "an unexpected YAML node"
}

// decode fills v from n, recording problems instead of stopping at the first.
func (d *decoder) decode(n *yaml.Node, v reflect.Value, path string) {
	n = resolve(n)
	if n == nil {
		return
	}
	if v.CanAddr() && v.Addr().Type().Implements(nodeDecoderType) {
		v.Addr().Interface().(nodeDecoder).decodeNode(d, n, path)
		return
	}
	switch v.Kind() {
	case reflect.Pointer:
		if n.Kind == yaml.ScalarNode && n.Tag == "!!null" {
			return
		}
		if v.IsNil() {
			v.Set(reflect.New(v.Type().Elem()))
		}
		d.decode(n, v.Elem(), path)
	case reflect.Struct:
		d.decodeStruct(n, v, path)
	case reflect.Slice:
		if n.Kind != yaml.SequenceNode {
			d.add(n.Line, path, "want a list, got %s", kindName(n))
			return
		}
		s := reflect.MakeSlice(v.Type(), len(n.Content), len(n.Content))
		for i, item := range n.Content {
			d.decode(item, s.Index(i), fmt.Sprintf("%s[%d]", path, i))
		}
		v.Set(s)
	case reflect.Map:
		d.decodeMap(n, v, path)
	case reflect.String:
		if n.Kind != yaml.ScalarNode || n.Tag == "!!null" {
			d.add(n.Line, path, "want text, got %s", kindName(n))
			return
		}
		v.SetString(n.Value)
	case reflect.Float64:
		f, ok := d.number(n, path)
		if ok {
			v.SetFloat(f)
		}
	case reflect.Int:
		f, ok := d.number(n, path)
		if !ok {
			return
		}
		if f != math.Trunc(f) || math.Abs(f) > 1e9 {
			d.add(n.Line, path, "want a whole number, got %s", n.Value)
			return
		}
		v.SetInt(int64(f))
	case reflect.Bool:
		if n.Kind != yaml.ScalarNode || n.Tag != "!!bool" {
			d.add(n.Line, path, "want true or false, got %s", kindName(n))
			return
		}
		var b bool
		if err := n.Decode(&b); err != nil {
			d.add(n.Line, path, "want true or false, got %s", kindName(n))
			return
		}
		v.SetBool(b)
	default:
		d.add(n.Line, path, "cannot read this field (internal type %s)", v.Type())
	}
}

func (d *decoder) number(n *yaml.Node, path string) (float64, bool) {
	if n.Kind != yaml.ScalarNode || (n.Tag != "!!int" && n.Tag != "!!float") {
		d.add(n.Line, path, "want a number, got %s", kindName(n))
		return 0, false
	}
	var f float64
	if err := n.Decode(&f); err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
		d.add(n.Line, path, "want a finite number, got %s", n.Value)
		return 0, false
	}
	return f, true
}

// yamlFields maps the yaml keys of a struct type to field indexes.
func yamlFields(t reflect.Type) (map[string]int, []string) {
	idx := map[string]int{}
	var names []string
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		tag := strings.Split(f.Tag.Get("yaml"), ",")[0]
		if tag == "" || tag == "-" {
			continue
		}
		idx[tag] = i
		names = append(names, tag)
	}
	return idx, names
}

func (d *decoder) decodeStruct(n *yaml.Node, v reflect.Value, path string) {
	if n.Kind != yaml.MappingNode {
		d.add(n.Line, path, "want a mapping (key: value lines), got %s", kindName(n))
		return
	}
	idx, names := yamlFields(v.Type())
	var ln lines
	if f := v.FieldByName("Lines"); f.IsValid() && f.Type() == reflect.TypeOf(lines(nil)) {
		ln = lines{"": n.Line}
		f.Set(reflect.ValueOf(ln))
	}
	seen := map[string]bool{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, val := resolve(n.Content[i]), n.Content[i+1]
		key := k.Value
		field := joinPath(path, key)
		if seen[key] {
			d.add(k.Line, field, "key written twice; keep one")
			continue
		}
		seen[key] = true
		fi, ok := idx[key]
		if !ok {
			hint := ""
			if !d.full() {
				// Past the listed problems a suggestion is not shown.
				hint = suggest(key, names)
			}
			d.add(k.Line, field, "unknown key %q%s; expected one of: %s", key, hint, strings.Join(names, ", "))
			continue
		}
		if ln != nil {
			ln[key] = resolve(val).Line
		}
		d.decode(val, v.Field(fi), field)
	}
}

func (d *decoder) decodeMap(n *yaml.Node, v reflect.Value, path string) {
	if n.Kind != yaml.MappingNode {
		d.add(n.Line, path, "want a mapping (key: value lines), got %s", kindName(n))
		return
	}
	if v.Type().Key().Kind() != reflect.String {
		d.add(n.Line, path, "cannot read this field (internal map type %s)", v.Type())
		return
	}
	m := reflect.MakeMap(v.Type())
	for i := 0; i+1 < len(n.Content); i += 2 {
		k := resolve(n.Content[i])
		field := joinPath(path, k.Value)
		key := reflect.ValueOf(k.Value).Convert(v.Type().Key())
		if m.MapIndex(key).IsValid() {
			d.add(k.Line, field, "key written twice; keep one")
			continue
		}
		elem := reflect.New(v.Type().Elem()).Elem()
		d.decode(n.Content[i+1], elem, field)
		m.SetMapIndex(key, elem)
	}
	v.Set(m)
}

func joinPath(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

// suggest names the closest known key when the unknown one looks like a typo.
func suggest(key string, known []string) string {
	best, bestD := "", 3
	for _, k := range known {
		if len(key) >= len(k)+bestD || len(k) >= len(key)+bestD {
			continue // the lengths alone differ by too much
		}
		if dd := editDistance(key, k); dd < bestD {
			best, bestD = k, dd
		}
	}
	if best == "" {
		return ""
	}
	return fmt.Sprintf(" (did you mean %q?)", best)
}

func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			c := 1
			if a[i-1] == b[j-1] {
				c = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+c)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// orderedKeys returns a mapping node's keys in file order with their lines.
type keyLine struct {
	key  string
	line int
	val  *yaml.Node
}

func mappingKeys(n *yaml.Node) []keyLine {
	n = resolve(n)
	if n == nil || n.Kind != yaml.MappingNode {
		return nil
	}
	out := make([]keyLine, 0, len(n.Content)/2)
	for i := 0; i+1 < len(n.Content); i += 2 {
		k := resolve(n.Content[i])
		out = append(out, keyLine{key: k.Value, line: k.Line, val: n.Content[i+1]})
	}
	return out
}

// sortedKeys is used where a map's order does not matter but output must be
// deterministic.
func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
