// Package system solves machines of several components that share a
// shutdown: the joint Markov decision process over the product of the
// component condition scales, without forming its transition matrix.
//
// Key types: Machine (components, shared shutdown and down costs, the
// discount), Settings (tolerance, sweep cap, workers, warm start), Result
// (joint policy, proven bounds, gap), ProductEvaluation (the separately
// planned components evaluated on the joint model), AloneRule and
// GroupRule (the joint advice in words), Estimate (memory bound, sweep
// bound and expected time of a solve, to refuse or announce a long one
// before it starts).
//
// Method. Value iteration with MacQueen's bounds (Puterman 1994, §6.6.3);
// each joint action's P·v is a Kronecker product of component rows applied
// by successive mode products, and joint actions share prefixes in a
// depth-first walk of the action tree, split into tasks among workers.
// A joint state is indexed in mixed radix with the first component most
// significant. Results do not depend on the number of workers: ties go to
// the lowest joint action index.
//
// Errors are prefixed "system:"; the faults of a machine are *Fault values
// joined by errors.Join; an estimate above a caller's limit is a
// *LimitError; reaching the sweep cap is a Status, not an error.
// Cancellation: every loop over joint states looks at its context every
// few thousand states, so a cancelled call returns ctx.Err() within
// milliseconds whatever the size.
package system
