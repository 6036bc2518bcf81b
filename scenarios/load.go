package scenarios

import (
	"bytes"
	"crypto/sha256"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"gopkg.in/yaml.v3"
)

// MaxFileSize bounds a scenario file; anything larger is not a scenario.
const MaxFileSize = 8 << 20

// LoadFile reads and validates a scenario file from disk. Files it refers
// to are looked up in the scenario's own folder.
func LoadFile(path string) (*Scenario, error) {
	return Load(os.DirFS(filepath.Dir(path)), filepath.Base(path))
}

// Load reads and validates the scenario name from fsys.
func Load(fsys fs.FS, name string) (*Scenario, error) {
	sc, _, _, err := load(fsys, name)
	return sc, err
}

// load reads and validates a scenario, and also returns its merged node
// tree and the files of its extends chain (kept by LoadEditable).
func load(fsys fs.FS, name string) (*Scenario, *yaml.Node, []string, error) {
	data, err := fs.ReadFile(fsys, name)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, nil, nil, &InputError{Issues: []*Issue{{File: name, Msg: "file not found; check the path"}}}
		}
		return nil, nil, nil, &InputError{Issues: []*Issue{{File: name, Msg: fmt.Sprintf("cannot read the file: %v", err)}}}
	}
	root, files, err := loadChain(fsys, name, data)
	if err != nil {
		return nil, nil, nil, err
	}
	sc, read, err := decodeScenario(inputSource{fsys: fsys, name: name}, root, files)
	if err != nil {
		return nil, nil, nil, err
	}
	// Digests of every file read (the scenario, its bases and the data
	// files they name), so reports can show exactly which inputs produced
	// them.
	for _, f := range append(files, read...) {
		b, err := fs.ReadFile(fsys, f)
		if err != nil {
			return nil, nil, nil, &InputError{Issues: []*Issue{{File: f, Msg: fmt.Sprintf("cannot read the file: %v", err)}}}
		}
		sc.Inputs = append(sc.Inputs, InputFile{Name: f, SHA256: fmt.Sprintf("%x", sha256.Sum256(b))})
	}
	return sc, root, files, nil
}

var yamlLine = regexp.MustCompile(`line (\d+)`)

// parseNode reads YAML text into a node tree, turning syntax errors into an
// Issue with the line yaml.v3 reports.
func parseNode(name string, data []byte) (*yaml.Node, error) {
	is := &issues{file: name}
	if len(data) > MaxFileSize {
		is.add(0, "", "file is %d bytes; a scenario file is at most %d", len(data), MaxFileSize)
		return nil, is.err()
	}
	if !utf8.Valid(data) {
		is.add(0, "", "file is not UTF-8 text; save it as UTF-8")
		return nil, is.err()
	}
	var doc yaml.Node
	dec := yaml.NewDecoder(bytes.NewReader(data))
	if err := dec.Decode(&doc); err != nil {
		msg := strings.TrimPrefix(err.Error(), "yaml: ")
		line := 0
		if m := yamlLine.FindStringSubmatch(msg); m != nil {
			line, _ = strconv.Atoi(m[1])
			msg = strings.TrimSpace(strings.TrimPrefix(msg, m[0]+":"))
		}
		if err.Error() == "EOF" {
			msg = "file is empty; start from a scenario in scenarios/examples/"
		} else {
			msg = "YAML syntax error: " + msg + "; check indentation and that every key is followed by a colon"
		}
		is.add(line, "", "%s", msg)
		return nil, is.err()
	}
	var extra yaml.Node
	if err := dec.Decode(&extra); err == nil {
		is.add(extra.Line, "", "the file holds a second YAML document (after ---); keep one scenario per file")
		return nil, is.err()
	}
	root := resolve(&doc)
	if root.Kind == yaml.DocumentNode && len(root.Content) > 0 {
		root = resolve(root.Content[0])
	}
	if root.Kind != yaml.MappingNode {
		is.add(root.Line, "", "want a scenario (key: value lines such as name:, horizon:, classes:), got %s", kindName(root))
		return nil, is.err()
	}
	// Anchors and aliases (&name, *name) let a few lines stand for millions
	// of values, which the strict decoder would walk one by one.
	written, aliasLine := writtenNodes(&doc)
	if limit := 10*written + 100_000; expandedNodes(&doc, limit, map[*yaml.Node]int{}) > limit {
		is.add(aliasLine, "", "anchors and aliases (&name, *name) expand this file to more than %d values, or an alias refers to itself; write the repeated parts out", limit)
		return nil, is.err()
	}
	return root, nil
}

// writtenNodes counts the nodes as written, aliases not followed, and
// returns the line of the first alias.
func writtenNodes(n *yaml.Node) (count, aliasLine int) {
	count = 1
	if n.Kind == yaml.AliasNode {
		return 1, n.Line
	}
	for _, c := range n.Content {
		k, l := writtenNodes(c)
		count += k
		if aliasLine == 0 {
			aliasLine = l
		}
	}
	return count, aliasLine
}

// expandedNodes counts the nodes with aliases followed, stopping past limit.
// An alias inside its own anchor counts as past the limit.
func expandedNodes(n *yaml.Node, limit int, memo map[*yaml.Node]int) int {
	if n.Kind == yaml.AliasNode && n.Alias != nil {
		if v, ok := memo[n.Alias]; ok {
			return v
		}
		memo[n.Alias] = limit + 1
		v := expandedNodes(n.Alias, limit, memo)
		memo[n.Alias] = v
		return v
	}
	total := 1
	for _, c := range n.Content {
		if total += expandedNodes(c, limit, memo); total > limit {
			return limit + 1
		}
	}
	return total
}

// Parse validates a scenario held in memory; name is used in messages.
// It has no folder, so it cannot extend a base or read the files a scenario
// may name (inventory_csv, fit files): use Load or LoadFile for those.
func Parse(name string, data []byte) (*Scenario, error) {
	root, err := parseNode(name, data)
	if err != nil {
		return nil, err
	}
	if ext, line := extendsOf(root); ext != "" {
		is := &issues{file: name}
		is.add(line, "extends", "a scenario read from memory cannot extend %q; load it from its folder (LoadFile)", ext)
		return nil, is.err()
	}
	sc, _, err := decodeScenario(inputSource{name: name}, root, nil)
	return sc, err
}

// decodeScenario decodes and checks a (merged) scenario node tree; the data
// files it names (fit files, inventory CSVs) are read from src and returned,
// in first-use order.
func decodeScenario(src inputSource, root *yaml.Node, files []string) (*Scenario, []string, error) {
	name, fsys := src.name, src.fsys
	is := &issues{file: name, files: files}
	var f fileScenario
	d := &decoder{issues: is}
	d.decode(root, reflect.ValueOf(&f).Elem(), "")
	if len(is.list) > 0 {
		// Shapes are wrong: checking meaning now would repeat the same
		// problems in vaguer words.
		return nil, nil, is.err()
	}
	// Fit files stand in for inline matrices; a problem with one would
	// otherwise also read as a missing matrix.
	read := resolveFits(&f, fsys, is)
	if len(is.list) > 0 {
		return nil, nil, is.err()
	}
	f.source = src
	sc := build(&f, is)
	if err := is.err(); err != nil {
		return nil, nil, err
	}
	sc.Source = name
	for _, inv := range sc.Inventories {
		if !slices.Contains(read, inv.File) {
			read = append(read, inv.File)
		}
	}
	return sc, read, nil
}
