package scenarios

import (
	"errors"
	"io/fs"
	"path"
	"strings"

	"gopkg.in/yaml.v3"
)

// A scenario may start from another: `extends: base.yaml` (a path relative
// to the scenario's folder) takes the base scenario and lays this file's
// keys over it, node by node: mappings merge key by key (so `budget:
// {yearly: 4000000}` keeps the base's budget groups), lists replace the
// base's list, except the lists of named items `classes` and `treatments`,
// which merge item by item on `name` (an item with a new name is added at
// the end). The base may itself extend another file; a cycle is an error.
//
// Every problem still points at the file and line where the value was
// written: before merging, the lines of the n-th file in the chain are
// moved up by n·lineBlock, and issues maps them back (issues.add).

// lineBlock separates the lines of the files of an extends chain.
const lineBlock = 1 << 24

// maxExtends bounds the length of an extends chain.
const maxExtends = 16

// namedLists are the lists whose items merge by name.
var namedLists = map[string]bool{"classes": true, "treatments": true}

// loadChain parses name and, through extends, its bases, and returns the
// merged root. files[n] names the n-th file of the chain (files[0] = name).
func loadChain(src inputSource, name string, data []byte) (*yaml.Node, []string, error) {
	files := []string{name}
	root, err := parseNode(name, data)
	if err != nil {
		return nil, nil, err
	}
	return extend(src, root, files)
}

func extend(src inputSource, root *yaml.Node, files []string) (*yaml.Node, []string, error) {
	idx := len(files) - 1
	cur := files[idx]
	is := &issues{file: cur}
	ext, line := extendsOf(root)
	if ext == "" {
		return root, files, nil
	}
	line %= lineBlock
	if path.IsAbs(ext) || strings.Contains(ext, "\\") {
		is.add(line, "extends", "%q: give the base scenario's path relative to this file's folder, with / between folders", ext)
		return nil, nil, is.err()
	}
	base := path.Clean(path.Join(path.Dir(cur), ext))
	if !fs.ValidPath(base) {
		is.add(line, "extends", "base scenario %q lies outside this file's folder; keep the base in the same folder or below it", ext)
		return nil, nil, is.err()
	}
	for _, f := range files {
		if f == base {
			is.add(line, "extends", "extends cycle: %s -> %s; a scenario cannot extend itself through its bases, remove one extends", strings.Join(files, " -> "), base)
			return nil, nil, is.err()
		}
	}
	if len(files) >= maxExtends {
		is.add(line, "extends", "more than %d scenarios in a chain of extends; flatten some of them", maxExtends)
		return nil, nil, is.err()
	}
	data, err := readInput(src.fsys, base, MaxFileSize, src.digests)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			is.add(line, "extends", "base scenario %q not found; check the name and that it sits in this file's folder", ext)
		} else {
			is.add(line, "extends", "base scenario %q %s", ext, describeOpenError(err))
		}
		return nil, nil, is.err()
	}
	baseRoot, err := parseNode(base, data)
	if err != nil {
		return nil, nil, err
	}
	files = append(files, base)
	shiftLines(baseRoot, len(files)-1, map[*yaml.Node]bool{})
	merged, files, err := extend(src, baseRoot, files)
	if err != nil {
		return nil, nil, err
	}
	return mergeNodes(merged, root, ""), files, nil
}

// extendsOf returns the value of the top-level extends key and its line.
func extendsOf(root *yaml.Node) (string, int) {
	for _, kl := range mappingKeys(root) {
		if kl.key == "extends" {
			v := resolve(kl.val)
			return strings.TrimSpace(v.Value), v.Line
		}
	}
	return "", 0
}

func shiftLines(n *yaml.Node, file int, seen map[*yaml.Node]bool) {
	if n == nil || seen[n] {
		return
	}
	seen[n] = true
	n.Line += file * lineBlock
	for _, c := range n.Content {
		shiftLines(c, file, seen)
	}
	shiftLines(n.Alias, file, seen)
}

// mergeNodes lays over on top of base. key is the mapping key the nodes
// sit under ("" at the top).
func mergeNodes(base, over *yaml.Node, key string) *yaml.Node {
	b, o := resolve(base), resolve(over)
	switch {
	case b.Kind == yaml.MappingNode && o.Kind == yaml.MappingNode:
		out := *o
		out.Content = nil
		overKeys := mappingKeys(o)
		inOver := map[string]*yaml.Node{}
		for _, kl := range overKeys {
			inOver[kl.key] = kl.val
		}
		done := map[string]bool{}
		for i := 0; i+1 < len(b.Content); i += 2 {
			k := resolve(b.Content[i]).Value
			if k == "extends" {
				continue
			}
			v := b.Content[i+1]
			kn := b.Content[i]
			if ov, ok := inOver[k]; ok {
				v = mergeNodes(v, ov, k)
				kn = overKeyNode(o, k)
				done[k] = true
			}
			out.Content = append(out.Content, kn, v)
		}
		for i := 0; i+1 < len(o.Content); i += 2 {
			k := resolve(o.Content[i]).Value
			if done[k] || k == "extends" {
				continue
			}
			out.Content = append(out.Content, o.Content[i], o.Content[i+1])
		}
		return &out
	case b.Kind == yaml.SequenceNode && o.Kind == yaml.SequenceNode && namedLists[key]:
		out := *o
		out.Content = append([]*yaml.Node(nil), b.Content...)
		for _, item := range o.Content {
			name := itemName(item)
			merged := false
			if name != "" {
				for i, bi := range out.Content {
					if itemName(bi) == name {
						out.Content[i] = mergeNodes(bi, item, "")
						merged = true
						break
					}
				}
			}
			if !merged {
				out.Content = append(out.Content, item)
			}
		}
		return &out
	}
	return over
}

func overKeyNode(o *yaml.Node, key string) *yaml.Node {
	for i := 0; i+1 < len(o.Content); i += 2 {
		if resolve(o.Content[i]).Value == key {
			return o.Content[i]
		}
	}
	return nil
}

func itemName(n *yaml.Node) string {
	for _, kl := range mappingKeys(n) {
		if kl.key == "name" {
			return resolve(kl.val).Value
		}
	}
	return ""
}
