// Package system solves machines of several components that share a
// shutdown: the joint Markov decision process over the product of the
// component condition scales, without forming its transition matrix.
//
// Key types: Machine (components, shared shutdown and down costs, the
// discount), Settings (tolerance, sweep cap, workers, warm start), Result
// (joint policy, proven bounds, gap), ProductEvaluation (the separately
// planned components evaluated on the joint model), AloneRule and
// GroupRule (the joint advice in words).
//
// Method. Value iteration with MacQueen's bounds (Puterman 1994, §6.6.3);
// each joint action's P·v is a Kronecker product of component rows applied
// by successive mode products, and joint actions share prefixes in a
// depth-first walk of the action tree. A joint state is indexed in mixed
// radix with the first component most significant.
//
// Errors are prefixed "system:"; reaching the sweep cap is a Status, not an
// error; cancellation is checked during sweeps.
package system
