package render

// LOSYears are the plan years that level-of-service tables and figures
// show, in the reports and on the what-if page alike: year 1, 5, 10 and
// the last, those within the horizon, each once.
func LOSYears(horizon int) []int {
	var out []int
	for _, t := range []int{1, 5, 10, horizon} {
		if t >= 1 && t <= horizon && (len(out) == 0 || out[len(out)-1] < t) {
			out = append(out, t)
		}
	}
	return out
}
