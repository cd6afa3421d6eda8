// Package fleet plans the work of a fleet of equipment classes under a
// budget per calendar year, with proven bounds on a problem stated in
// words.
//
// Key types: Problem (classes with their condition models, costs and unit
// counts, one discount with its period, the budget of each calendar
// year), Settings (gap target, round cap), Plan (the problem solved as a
// Statement, its bounds, budget prices, the plan's policy and expected
// counts per period, figures per calendar year, and the whole-unit work
// list of the first period), Simulation (Monte-Carlo of the plan's
// policy, of the whole-unit practice or of the unconstrained advice, with
// percentile bands).
//
// Conventions. The horizon is len(Budget) calendar years; the plan runs
// over the Period.Count(years) periods that start within it. A period's
// work is done and paid at its start and is charged to the budget of the
// calendar year in which it starts (costs.Period.Year): with periods
// shorter than a year several periods share one year's budget; with
// periods longer than a year some years start no period and their budget
// is not used. Period k's costs are discounted by γ^k, γ the factor per
// period of the Discount; after the last period each unit is charged its
// unconstrained optimal value. Figures named per year are sums over the
// periods of a calendar year; the others are per period. Mandatory work
// is work in conditions where the passive action is not admissible
// (unsafe ones); it is always done.
//
// Method. The expected-count (fluid) model is a linear program whose
// yearly budget rows couple the classes. Dantzig-Wolfe column generation
// solves it: the master chooses a mixture of class policies under the
// year rows (a small dense two-phase simplex that returns the budget
// prices λ_y), pricing solves every class's finite-horizon problem at the
// prices, and the Lagrangian relaxation of the year rows gives a lower
// bound at every round (G. B. Dantzig and P. Wolfe, Decomposition
// principle for linear programs, Oper. Res. 8, 1960; L. S. Lasdon,
// Optimization Theory for Large Systems, 1970). Years whose budget cannot
// cover the mandatory work are found first, year by year, by programs of
// the same kind (see Solve and Statement).
//
// Whole units. Beyond the first period the fleet's condition is not
// known, so only the first period gets a whole-unit work list; later
// periods are the plan's policy (shares of the units in each condition)
// and its expected counts. The practice of applying that policy to the
// units found each period, in whole units and within the budget, is
// valued by Simulate with FollowPractice, an estimate with a standard
// error, not a bound.
//
// Errors are prefixed "fleet:"; reaching the round cap is reported by the
// plan's gap, not as an error; cancellation is checked every round and
// before every simulated run.
package fleet
