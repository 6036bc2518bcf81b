// Package scenarios reads a planning scenario file, checks it, and runs it
// end to end into a Result that renderers print.
//
// A scenario file is YAML (see DESIGN.md section 3 and the examples in
// scenarios/examples). It is parsed strictly: unknown keys, wrong types and
// duplicate keys are errors, and every problem is reported at once with its
// file, line and the dotted path of the field, in an *InputError.
//
// Condition scales list states best first, each with the index range it
// covers and a representative value. Index values are mapped linearly onto
// a condition score from 0 (the worst end of the scale) to 100 (the best
// end), so that classes on different scales can be averaged into network
// figures; for scales where lower is better (IRI) the mapping runs the other
// way, and a min_average_index target then means "no worse than".
//
// Network figures weight classes by the weights given when every class
// gives one (these win over replacement costs), else by replacement value
// (quantity times replacement unit cost) when every class gives one, and
// equally otherwise; the Result says which, and warns when only some
// classes give a replacement cost.
package scenarios
