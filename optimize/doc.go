// Package optimize turns maintenance models into Markov decision processes
// and solves them to proven optimality.
//
// Key types: Problem (a finite MDP with sparse transition rows: for every
// state the admissible choices, each with its expected one-period cost and
// next-state distribution), Settings (method, tolerance, caps), Result
// (policy, exact values, proven bounds, gap, Bellman residual, Q-values,
// runner-ups and margins, ties). Build makes a Problem from a
// condition.Model and a costs.Schedule.
//
// Criterion. Minimise the expected discounted cost
// v_π(s) = E[Σ_t γ^t c(s_t, π(s_t)) | s_0 = s], costs charged at the start
// of each period and the next period discounted once by γ. The optimal
// value v* is the unique fixed point of the Bellman operator
// (T v)(s) = min_a { c(s,a) + γ Σ_j P(j|s,a) v(j) }, a γ-contraction in the
// max norm.
//
// Methods. Value iteration with MacQueen's bounds, Howard's policy
// iteration with exact evaluation (gonum LU), and the linear program
// solved by a dense simplex method that cannot cycle (Bland's rule after a
// run of degenerate pivots; optimize/internal/simplex). Whatever the
// method, Solve evaluates the returned policy exactly and proves bounds by
// the contraction property:
// for any v, with d = T v - v, Tv + γ/(1-γ)·min d <= v* <= Tv + γ/(1-γ)·max d.
// The reported gap max_s (v_π(s) - lower(s)) bounds what the advice can
// lose against the optimum in any state.
//
// Ties. Actions whose Q-values are within the tie tolerance τ of the best
// are tied; the advice is the lowest action index among them (the first
// action in the model), the same rule for every method, and the tie is
// reported. The default τ is capped at (1-γ)·Tol/2, so the tie rule costs
// at most τ/(1-γ) <= Tol/2 and never makes the advice worse than its
// runner-up by more than the stated gap.
//
// Average criterion. SolveAverage runs multichain policy iteration and
// reports the gain and the bias (P*h = 0, shifted to 0 in state 0) with
// Odoni's bounds; it refuses a model only when the optimal gain differs
// between starting states (*MultichainError).
//
// Certificates. A result that misses its tolerance says why
// (Result.Shortfall): the iteration cap, the rounding floor of float64 at
// the values' scale and the discount factor, an explicit tie tolerance, or
// the simplex method's own tolerance.
//
// Units. Tolerances are absolute, in the currency of the costs. States and
// actions are indices inside; names live in Problem.States and
// Problem.Actions.
//
// Errors. Invalid problems (Validate reports every fault as a
// *ProblemError with its field and location: costs beyond ±MaxChoiceCost,
// factors within costs.MinDiscountGap of 1), non-finite numbers and
// cancellation are errors; reaching an iteration cap is a Status. Every
// long loop checks ctx at least once per LU factorisation, sweep or pivot.
// Auxiliary figures (life figures) that cannot be computed are dropped
// with their reason, never failing the advice. Messages are prefixed
// "optimize:".
//
// Subpackages. optimize/fleet plans a fleet of classes under yearly
// budgets (column generation with Lagrangian bounds); optimize/system
// solves machines of components sharing a shutdown on the product state
// space; optimize/inspect chooses the action and the next inspection
// interval together (a semi-Markov decision process with hidden failures);
// optimize/robust gives the advice that holds for every transition row in
// (s,a)-rectangular L1 or KL ambiguity sets. Each follows the same
// Problem/Settings/Result pattern and the same certificate.
//
// References. R. A. Howard, Dynamic Programming and Markov Processes, MIT
// Press, 1960. J. MacQueen, A modified dynamic programming method for
// Markovian decision problems, J. Math. Anal. Appl. 14, 1966. E. L.
// Porteus, Some bounds for discounted sequential decision processes,
// Management Science 18, 1971. A. R. Odoni, On finding the maximal gain
// for Markov decision processes, Oper. Res. 17, 1969. M. L. Puterman,
// Markov Decision Processes, Wiley, 1994, chapters 6, 8 and 9.
package optimize
