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
//
// A scenario may extend a base scenario (extends.go): the YAML node trees
// are merged before decoding, mappings key by key, lists replaced except
// classes and treatments, merged by name. Lines of the n-th file of the
// chain are shifted by n·2^24 so that every problem still names the file and
// line where the value was written.
//
// Funding answers (funding.go) come from optimize: the least level budget
// (min-cost plans and plans whose targets are not met), the extra money per
// year that closes every shortfall, and the worst-first rule's condition
// score under the same money. Sweep plans a list of level budgets and
// Compare a list of scenarios, in parallel (at most GOMAXPROCS at a time),
// results in input order. LongRun reports the steady-state policy.
//
// What-if changes (whatif.go, for the `wearplan serve` page): an Editable
// keeps a loaded scenario's YAML tree; Changes (budget level and yearly
// steps, escalation, targets, objective) are laid over it as an overlay
// file and checked by the same decoder and build as a file, and the result
// can be written back out as one stand-alone scenario file.
package scenarios
