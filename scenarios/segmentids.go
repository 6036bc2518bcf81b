package scenarios

import (
	"bytes"
	"cmp"
	"fmt"
	"hash/maphash"
	"slices"
)

// segmentIDs checks that segment ids are unique across a scenario's
// segment lists, in little memory whatever the number of rows: the ids are
// kept one after another in one byte slice, with a 64-bit hash, a file and
// a line each (about 32 bytes a row besides the id itself), and sorted by
// hash once at the end; ids with the same hash are then compared byte for
// byte, so a hash collision never passes for a repeated id. (Sorting once
// is several times faster than a map of millions of strings filled row by
// row.) The hash is keyed at random, so that no file can be made of ids
// that collide; the result does not depend on the key.
type segmentIDs struct {
	seed  maphash.Seed
	refs  []idRef
	arena []byte
	ends  []int64
	where []idWhere
}

type idRef struct {
	hash uint64
	idx  uint32
}

type idWhere struct {
	file, line int32
}

func newSegmentIDs() *segmentIDs { return &segmentIDs{seed: maphash.MakeSeed()} }

// reserve makes room for about rows more ids of idBytes bytes each, so
// that a large list is not copied again and again as it grows.
func (s *segmentIDs) reserve(rows, idBytes int) {
	s.refs = slices.Grow(s.refs, rows)
	s.ends = slices.Grow(s.ends, rows)
	s.where = slices.Grow(s.where, rows)
	s.arena = slices.Grow(s.arena, rows*idBytes)
}

// add records the id of a row kept from file (an index into the
// scenario's inventories) at line.
func (s *segmentIDs) add(id string, file, line int) {
	s.refs = append(s.refs, idRef{hash: maphash.String(s.seed, id), idx: uint32(len(s.ends))})
	s.arena = append(s.arena, id...)
	s.ends = append(s.ends, int64(len(s.arena)))
	s.where = append(s.where, idWhere{int32(file), int32(min(line, 1<<31-1))})
}

func (s *segmentIDs) id(i uint32) []byte {
	start := int64(0)
	if i > 0 {
		start = s.ends[i-1]
	}
	return s.arena[start:s.ends[i]]
}

// report adds a problem for every id used again, at the later use, naming
// the first; files names the inventories and idColumn their id columns.
func (s *segmentIDs) report(files []*Inventory, is *issues) {
	slices.SortFunc(s.refs, func(a, b idRef) int {
		return cmp.Or(cmp.Compare(a.hash, b.hash), cmp.Compare(a.idx, b.idx))
	})
	type dup struct{ at, first uint32 }
	var dups []dup
	for i := 0; i < len(s.refs); {
		j := i + 1
		for j < len(s.refs) && s.refs[j].hash == s.refs[i].hash {
			j++
		}
		// Within a run of equal hashes (in row order), each row is a
		// repeat of the first earlier row with the same bytes.
		var firsts []uint32
		for _, r := range s.refs[i:j] {
			id := s.id(r.idx)
			found := false
			for _, f := range firsts {
				if bytes.Equal(s.id(f), id) {
					dups = append(dups, dup{r.idx, f})
					found = true
					break
				}
			}
			if !found {
				firsts = append(firsts, r.idx)
			}
		}
		i = j
	}
	slices.SortFunc(dups, func(a, b dup) int { return cmp.Compare(a.at, b.at) })
	for n, d := range dups {
		if is.full() {
			is.unlisted += len(dups) - n
			return
		}
		at, first := s.where[d.at], s.where[d.first]
		where := fmt.Sprintf("line %d", first.line)
		if at.file != first.file {
			where = fmt.Sprintf("%s:%d", files[first.file].File, first.line)
		}
		inv := files[at.file]
		is.addIn(inv.File, int(at.line), inv.idColumn, "%q is already used on %s; ids must be unique (they key the worklist)", string(s.id(d.at)), where)
	}
}
