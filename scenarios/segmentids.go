package scenarios

import (
	"bytes"
	"cmp"
	"fmt"
	"hash/maphash"
	"math"
	"slices"
	"sort"
)

// segmentIDs checks that segment ids are unique across a scenario's
// segment lists, in little memory whatever the number of rows: the ids are
// kept one after another in one byte slice, each with a 64-bit hash, its
// row and its line (20 bytes a row besides the id itself), and sorted by
// hash once at the end; ids with the same hash are then compared byte for
// byte, so a hash collision never passes for a repeated id. (Sorting once
// is several times faster than a map of millions of strings filled row by
// row.) The hash is keyed at random, so that no file can be made of ids
// that collide; the result does not depend on the key.
type segmentIDs struct {
	seed  maphash.Seed
	refs  []idRef
	arena []byte
	// ends[i] is where row i's id ends in arena.
	ends []uint32
	// firstRow[f] is the first row of file f.
	firstRow []int
	// overflow says that the ids outgrew the arena's 4 GiB.
	overflow bool
}

// idRef is one row: its id's hash, its number among all rows read, and its
// line in its file.
type idRef struct {
	hash      uint64
	row, line uint32
}

func newSegmentIDs() *segmentIDs { return &segmentIDs{seed: maphash.MakeSeed()} }

// startFile says that the rows added next come from file f (an index into
// the inventories passed to report), and makes room for about rows of them
// with ids of idBytes bytes, so that a large list is not copied again and
// again as it grows.
func (s *segmentIDs) startFile(f, rows, idBytes int) {
	for len(s.firstRow) <= f {
		s.firstRow = append(s.firstRow, len(s.refs))
	}
	s.refs = slices.Grow(s.refs, rows)
	s.ends = slices.Grow(s.ends, rows)
	s.arena = slices.Grow(s.arena, rows*idBytes)
}

// add records the id of a row at line of the current file.
func (s *segmentIDs) add(id string, line int) {
	if len(s.arena)+len(id) > math.MaxUint32 || len(s.refs) == math.MaxUint32 {
		s.overflow = true
		return
	}
	s.refs = append(s.refs, idRef{hash: maphash.String(s.seed, id), row: uint32(len(s.ends)), line: uint32(min(line, math.MaxUint32))})
	s.arena = append(s.arena, id...)
	s.ends = append(s.ends, uint32(len(s.arena)))
}

func (s *segmentIDs) id(row uint32) []byte {
	start := uint32(0)
	if row > 0 {
		start = s.ends[row-1]
	}
	return s.arena[start:s.ends[row]]
}

// fileOf returns the file a row came from.
func (s *segmentIDs) fileOf(row uint32) int {
	return sort.Search(len(s.firstRow), func(f int) bool { return s.firstRow[f] > int(row) }) - 1
}

// report adds a problem for every id used again, at the later use, naming
// the first; files names the inventories (their ids' column in idColumn).
func (s *segmentIDs) report(files []*Inventory, is *issues) {
	if s.overflow {
		is.add(0, "", "the segment lists hold more than 4 GiB of ids; split the network into several scenarios")
		return
	}
	slices.SortFunc(s.refs, func(a, b idRef) int { return cmp.Compare(a.hash, b.hash) })
	type dup struct{ at, first idRef }
	var dups []dup
	for i := 0; i < len(s.refs); {
		j := i + 1
		for j < len(s.refs) && s.refs[j].hash == s.refs[i].hash {
			j++
		}
		if j-i > 1 {
			// A run of equal hashes, in row order: each row repeats the
			// first earlier row with the same bytes, if any.
			run := s.refs[i:j]
			slices.SortFunc(run, func(a, b idRef) int { return cmp.Compare(a.row, b.row) })
			var firsts []idRef
			for _, r := range run {
				id := s.id(r.row)
				k := slices.IndexFunc(firsts, func(f idRef) bool { return bytes.Equal(s.id(f.row), id) })
				if k >= 0 {
					dups = append(dups, dup{r, firsts[k]})
				} else {
					firsts = append(firsts, r)
				}
			}
		}
		i = j
	}
	slices.SortFunc(dups, func(a, b dup) int { return cmp.Compare(a.at.row, b.at.row) })
	for n, d := range dups {
		if is.full() {
			is.unlisted += len(dups) - n
			return
		}
		atFile, firstFile := s.fileOf(d.at.row), s.fileOf(d.first.row)
		where := fmt.Sprintf("line %d", d.first.line)
		if atFile != firstFile {
			where = fmt.Sprintf("%s:%d", files[firstFile].File, d.first.line)
		}
		inv := files[atFile]
		is.addIn(inv.File, int(d.at.line), inv.idColumn, "%q is already used on %s; ids must be unique (they key the worklist)", string(s.id(d.at.row)), where)
	}
}
