// Package fleet plans the work of a fleet of equipment classes under
// yearly budgets, with proven bounds.
//
// Key types: Problem (classes with their condition models, costs and unit
// counts, one discount, the budgets), Settings (gap target, round cap),
// Plan (bounds, budget prices, the expected-count plan and the whole-unit
// work list), Simulation (Monte-Carlo of a plan with percentile bands).
//
// Method. The expected-count (fluid) model is a linear program whose
// budget rows couple the classes. Dantzig-Wolfe column generation solves
// it: the master chooses a mixture of class policies under the budgets (a
// small dense two-phase simplex that returns the budget prices λ), pricing
// solves every class's finite-horizon problem at the prices, and the
// Lagrangian relaxation of the budgets gives a lower bound at every round
// (G. B. Dantzig and P. Wolfe, Decomposition principle for linear
// programs, Oper. Res. 8, 1960; L. S. Lasdon, Optimization Theory for
// Large Systems, 1970).
//
// Errors are prefixed "fleet:"; reaching the round cap is reported by the
// plan's gap, not as an error; cancellation is checked every round.
package fleet
