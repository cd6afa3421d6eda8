// Package robust gives maintenance advice that holds for every transition
// matrix the inspection records allow: a distributionally robust
// (ambiguous-transition) discounted Markov decision process on top of
// optimize.Problem, solved to proven accuracy.
//
// Key types. Sets holds one ambiguity set per admissible choice of a
// Problem (Row: radius, support, observations), built by Uniform (one
// radius), PerRow (a radius per action and state) or FromCounts (a
// confidence level and the observed transitions per row). Solve returns a
// Result: robust advice, worst-case costs with proven bounds, the
// adversary's rows, gap, residual, status, Q-values, runner-ups, ties.
// Evaluate returns the worst case of any fixed policy. Analyze adds the
// nominal answer, the nominal cost of the robust advice, the price of
// robustness and Settle's ranking of which rows more data would settle.
//
// Sets. For each admissible (state s, action a) with nominal row p̂, nature
// may pick any row q of the simplex on the support S (the states p̂ reaches,
// plus any Options.Widen targets: structural zeros stay zero unless
// widened) with
//
//	L1:  ‖q - p̂‖₁ <= r                          (Iyengar 2005; Nilim & El Ghaoui 2005)
//	KL:  KL(p̂‖q) = Σ_j p̂_j ln(p̂_j/q_j) <= r      (the likelihood region of Nilim & El Ghaoui 2005, §4; r in nats)
//
// independently for every (s, a): the sets are (s,a)-rectangular. The KL
// direction is the likelihood one, KL(empirical ‖ true), because that is
// the quantity the method-of-types bound controls, so its confidence
// statement is about the same set (Iyengar's relative-entropy set bounds
// the other direction, from memory).
//
// Radii from records. With n one-period observations of a row on k
// support states, the counting estimate p̂ satisfies
// P(‖p̂ - p‖₁ >= ε) <= (2^k - 2)·e^(-nε²/2) (Weissman et al. 2003, Theorem
// 2.1 with φ >= 2; L1Miss, L1Radius) and
// P(KL(p̂‖p) > ε) <= C(n+k-1, k-1)·e^(-nε) (the method of types, Cover &
// Thomas 2006, §11.1-11.2; KLMiss, KLRadius). FromCounts gives each of the
// m rows with data miss probability (1 - confidence)/m, so by the union
// bound (Bonferroni) every true row lies in its set with probability at
// least the confidence, conditional on the numbers of observations and
// assuming the nominal rows are those estimates and the support holds the
// truth. Rows with one support state are exact (radius 0); rows without
// records get the whole simplex on their support (L1 radius 2, KL +Inf) or,
// with NoData Refuse, an error. Sets.Statement says this in words; every
// output showing a worst case should carry it.
//
// Inner problems, exactly. The L1 maximum of q·v moves δ = min(r/2, 1 - p̂_j*)
// to a support state j* of largest value from those of lowest value first
// (sort and shift, O(k log k)). The KL maximum is
// max v + min_{t>=0} [t - e^(-r)·Π_j (t + g_j)^p̂_j], g_j = max v - v_j, a
// one-dimensional convex dual (after Nilim & El Ghaoui 2005), solved by a
// safeguarded Newton iteration that returns a feasible row (a lower value)
// and a dual point (an upper value) within ε = Tol·(1-γ)/(32γ) of each
// other.
//
// Robust solve. The robust Bellman operator
// (T v)(s) = min_a { c(s,a) + γ·max_{q∈P(s,a)} q·v } is monotone, a
// γ-contraction and translation-equivariant (Iyengar 2005, Theorem 3.2), so
// for any v, with d = T v - v, T v + γ/(1-γ)·min d <= v* <= T v + γ/(1-γ)·max d
// (the argument of MacQueen 1966 and Puterman 1994, §6.6.3). The lower
// bound is computed with the inner problems' feasible values and the upper
// with their dual values, so inexact KL inner maxima never make a bound
// wrong. Value iteration uses these bounds; robust policy iteration
// (Iyengar 2005, §4) evaluates each policy on the adversary's MDP (nature
// maximising cost with the policy fixed), solved by policy iteration for
// nature with exact linear solves. The advised policy is always evaluated
// that way: WorstCase is a proven upper bound on its worst case and
// Attained its exact cost under Adversary, a matrix inside the sets; Gap =
// max_s (WorstCase - Lower) bounds what the advice can lose against the
// robust optimum. Radius 0 reproduces optimize.Solve.
//
// Ties. Actions whose worst-case Q-values are within the tie tolerance are
// tied; the advice is the lowest action index, as in optimize, and the gap
// is computed after the tie rule, so it covers any loss from it.
//
// What the user reads (Analysis). Per state: the robust advice, its
// worst-case cost with lower and upper bounds, its cost under the nominal
// matrices (NominalCost), the nominal advice and its value, where they
// differ (Differs), the worst case of the nominal advice (NominalWorstCase),
// and the price of robustness Price[s] = NominalCost[s] - nominal value,
// summarised by its maximum over states (PriceOfRobustness, PriceState).
// Settle: for each row with a positive radius, the drop in worst-case cost
// and the advice changes if the row had four times the observations (the
// bound at 4n: half the L1 radius), ranked largest first; one warm-started
// robust solve per row.
//
// Scope. Class models only. Joint systems (optimize.System) are not
// supported: the truth is one matrix per component, shared by every joint
// state, so the joint ambiguity set is not (s,a)-rectangular (the robust
// problem with coupled sets is NP-hard in general; Wiesemann, Kuhn & Rustem,
// Math. Oper. Res. 38(1), 2013, from memory), and the rectangular relaxation
// over products of component rows makes each inner problem a non-convex
// multilinear maximisation over the exponential joint space that the
// structured system sweeps never build. Fleet plans (optimize.PlanFleet) are
// not supported either: a plan's budget rows use expected spend under the
// matrices, and a robust plan needs one adversary for cost and spend
// together across classes, which is not a robust MDP; per-class robust
// advice can be read beside a nominal plan.
//
// Units and errors. Costs and tolerances are in the problem's currency;
// states and actions are indices. Invalid problems or specifications
// (*RowError with state and action), non-finite numbers and cancellation
// are errors; reaching an iteration cap is Status NotCertified. Messages
// are prefixed "robust:".
//
// References. G. N. Iyengar, Robust dynamic programming, Math. Oper. Res.
// 30(2), 2005. A. Nilim and L. El Ghaoui, Robust control of Markov decision
// processes with uncertain transition matrices, Oper. Res. 53(5), 2005.
// T. Weissman, E. Ordentlich, G. Seroussi, S. Verdú and M. J. Weinberger,
// Inequalities for the L1 deviation of the empirical distribution, HP
// Laboratories HPL-2003-97 (R.1), 2003. T. M. Cover and J. A. Thomas,
// Elements of Information Theory, 2nd ed., Wiley, 2006. J. MacQueen, J.
// Math. Anal. Appl. 14, 1966. M. L. Puterman, Markov Decision Processes,
// Wiley, 1994. Section and theorem numbers of the papers are from memory.
package robust
