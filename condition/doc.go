// Package condition describes how equipment degrades: ordered condition
// scales, per-action transition models, their validation, and the
// analytics of the Markov chains they define.
//
// Key types: State (a condition on the scale, possibly unsafe), Action (an
// intervention with one sparse transition row per state where it is
// admissible), Model (a scale, its actions and the period length).
//
// Conventions. States are indexed 0..n-1 in scale order, best first; a row
// is indexed by its from-state and lists the probabilities of the states at
// the start of the next period. An action is admissible in a state exactly
// when it has a row for it; the passive action is never admissible in an
// unsafe state. Rows must sum to 1 within RowTolerance; Renormalize
// rescales rows that miss by no more than rounding their entries could,
// symmetrically for sums above and below 1.
//
// Chain analytics. Which states reach which is decided on the graph of
// positive entries; first-passage times, hitting probabilities and
// stationary distributions are computed by subtraction-free state
// reduction (Grassmann, Taksar & Heyman 1985), accurate to full relative
// precision even for probabilities of 1e-17. A figure float64 cannot hold
// is reported as a *NumericError with its state.
//
// Estimation. ReadRecords reads inspection records from CSV, BuildPanel
// turns them into transitions between consecutive inspections of a unit,
// and Estimate fits the rows of every action with data: by counting
// (intervals of one period) or by a continuous-time generator fitted by
// maximum likelihood, with bootstrap intervals over units and a G test.
// Rows and generator rows without data are nil, never guessed. Data
// problems are Warnings, not errors, one per kind: a kind that recurs is
// summarised with its count and first few lines, so that the warnings of
// a file stay bounded whatever its size. A panel that supports no fit
// gives an *InsufficientDataError carrying the warnings Estimate found.
//
// Errors. Validate reports every fault at once (errors.Join of *Fault
// values with state, action and target indices) so that callers can point
// at the place in their own input; messages are prefixed "condition:".
package condition
