package render

import (
	"slices"
	"testing"
)

func TestLOSYears(t *testing.T) {
	cases := []struct {
		horizon int
		want    []int
	}{
		{1, []int{1}}, {3, []int{1, 3}}, {5, []int{1, 5}}, {7, []int{1, 5, 7}},
		{10, []int{1, 5, 10}}, {12, []int{1, 5, 10, 12}}, {20, []int{1, 5, 10, 20}},
	}
	for _, c := range cases {
		if got := LOSYears(c.horizon); !slices.Equal(got, c.want) {
			t.Errorf("horizon %d: %v, want %v", c.horizon, got, c.want)
		}
	}
}
