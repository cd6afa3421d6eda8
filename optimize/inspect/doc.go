// Package inspect decides, together with the maintenance action, when to
// inspect a unit next: a semi-Markov decision process solved to proven
// optimality, with the figures a reliability engineer reads beside the
// advice (the cost of fixed inspection habits, hidden-failure exposure,
// an inspection calendar).
//
// The advice is advisory. Statutory inspection intervals and the scheme of
// examination of a competent person take precedence over it; the model
// assumes a Markov, stationary deterioration and perfect inspections.
// Intervals above the plan's limit (Plan.MaxIntervalYears, from the
// statutory or written scheme) are not admissible and are never advised.
//
// Key types: Plan (inspection cost, allowed intervals, hidden failures,
// risk cost, limit), Problem (built by Build from a condition.Model, a
// costs.Schedule, the discount factor and a Plan: for every state its
// decisions (action, interval) with their costs and kernels), Result
// (advice, exact values, proven bounds, gap, runner-ups, ties), Fixed (a
// fixed-interval habit against the optimum), LongRun (long-run exposure
// figures) and Calendar (inspections per year for a population).
// Solve takes an *optimize.Settings and reports optimize.Status.
//
// # Timing
//
// At a decision epoch the unit is seen in state s and the decision (a, k)
// is taken: action a now, next inspection after k periods. It charges
// C + downtime + cost(a, s) + running(s) at t = 0; s_1 is drawn from a's
// row. For t = 1..k-1 the unit is in s_t unseen and charges
// γ^t·(running(s_t) + risk(s_t)); a safe state moves by the passive row, a
// hidden unsafe state stays where it is until seen. The next epoch is at
// t = k in s_k, or earlier, at the first t < k with s_t a self-announcing
// unsafe state (the failure is seen then, and that epoch charges C like any
// other). τ is the time to the next epoch, 1 <= τ <= k. With C = 0, the
// intervals {1} and no hidden states this is the discounted MDP of
// optimize.Build exactly. Costs are in constant prices, charged at the
// start of the period in which they fall; γ is the discount factor per
// period.
//
// For every state s and decision d = (a, k), Build computes by one forward
// pass of the unseen chain
//
//	c(s,d)   = C + downtime + cost(a,s) + running(s) + E Σ_{t=1}^{τ-1} γ^t (running + risk)(s_t)
//	M_d(s,j) = E[γ^τ 1{s_τ = j}],   γ^k <= Σ_j M_d(s,j) = E[γ^τ] <= γ,
//
// and the undiscounted E[τ], P(s_τ = j), expected hidden periods and
// cycle cost used by the long-run figures. The optimal value is the unique
// fixed point of the Bellman operator
//
//	(T v)(s) = min_d { c(s,d) + Σ_j M_d(s,j) v(j) },
//
// a contraction in the max norm with modulus β = max_{s,d} Σ_j M_d(s,j)
// <= γ (M. L. Puterman, Markov Decision Processes, Wiley 1994, §11.3,
// discounted semi-Markov models as MDPs with state-and-decision-dependent
// discounting; H. C. Tijms, A First Course in Stochastic Models, Wiley
// 2003, ch. 7).
//
// # Bounds
//
// Let β_lo and β be the least and greatest kernel sums over all decisions,
// f(b) = b/(1-b), and for any v let d = T v - v, lo = min d, hi = max d.
// Then, in every state,
//
//	Tv + lo·f(β_lo) <= v*   if lo >= 0,    Tv + lo·f(β) <= v*     if lo < 0,
//	v* <= Tv + hi·f(β)      if hi >= 0,    v* <= Tv + hi·f(β_lo)  if hi < 0.
//
// These are the bounds of E. L. Porteus (Some bounds for discounted
// sequential decision processes, Management Science 18, 1971) for row sums
// that vary by decision (from memory); with constant row sums γ they are
// MacQueen's. Proof. For a policy σ let F_σ = Σ_{n>=1} M_σ^n =
// (I - M_σ)⁻¹ - I >= 0; each row of M_σ^n sums to between β_lo^n and β^n,
// so f(β_lo) <= (F_σ 1)(s) <= f(β). Upper: for π greedy at v,
// Tv = c_π + M_π v, so v_π - Tv = M_π(v_π - v) = M_π(v_π - Tv) + M_π d,
// hence v_π - Tv = F_π d <= hi·F_π 1, which is at most hi·f(β) when
// hi >= 0 and at most hi·f(β_lo) when hi < 0; and v* <= v_π. Lower: for
// an optimal π*, v* = c* + M* v* and Tv <= c* + M* v, so
// (I - M*)(v* - Tv) >= M* d, hence v* - Tv >= F* d >= lo·F* 1, which is
// at least lo·f(β_lo) when lo >= 0 and at least lo·f(β) when lo < 0. The
// sign matters because β varies by decision: a negative lo needs the
// largest factor, a positive one may use the smallest.
//
// Value iteration v_{n+1} = T v_n stops when the span of these bounds is
// at most Tol/2; one sweep costs O(nnz), the entries of all kernels.
// Policy iteration evaluates by an O(n³) LU solve of (I - M_π) v = c_π.
// The linear program, solved by gonum's simplex, is the occupation-measure
// LP: minimise Σ c(s,d) x(s,d) subject to
// Σ_d x(j,d) - Σ_{s,d} M_d(s,j) x(s,d) = 1/n, x >= 0. Whatever the method, Solve evaluates the returned policy exactly and certifies it
// with the bounds at v = v_π, widened by a rounding allowance
// (m+3)·2⁻⁵²·(max|c| + max|v|)/(1-β) for kernels of at most m entries.
// The gap max_s v_π(s) - lower(s) bounds what the advice can lose.
//
// # Ties
//
// Decisions whose Q-values are within the tie tolerance of the best are
// tied; the advice is the lowest (action, interval) among them, the first
// in Problem.Choices. The tolerance is Settings.TieTol (default
// optimize.DefaultTieTol·max(1, max|v|)) capped at (1-β)·Tol/2, so that a
// tie switch never costs more than Tol/2. The runner-up of a state is the
// best other decision; its margin is never below -Gap (v* <= T v_π).
//
// # Long-run figures and calendar
//
// Under a policy the states found at successive epochs form a Markov
// chain with rows P(s_τ = j | s); let ν be its stationary distribution.
// By the renewal-reward theorem for Markov renewal processes (S. M. Ross,
// Applied Probability Models with Optimization Applications, Holden-Day
// 1970, ch. 5; Tijms 2003, §7.1; from memory) a long-run rate per period
// is Σ_s ν(s) r(s) / Σ_s ν(s) E[τ|s] for a reward r(s) per cycle from s.
// So the share of time a unit spends in a hidden failure unseen (years per
// unit-year) is Σ ν h / Σ ν E[τ] with h(s) = E Σ_{t<τ} 1{s_t hidden};
// epochs per year are 1/(Σ ν E[τ]·PeriodYears); the probability that a
// scheduled inspection finds the unit unsafe is
// Σ ν(s) P(τ = k, s_k unsafe | s) / Σ ν(s) P(τ = k | s).
//
// The calendar propagates expected epoch counts e_t(s), starting from a
// mix at t = 0: e_{t+u}(j) += e_t(s)·P(τ = u, s_τ = j | s), and adds the
// expected running and risk costs of the unseen periods; period t belongs
// to year ⌊t·PeriodYears⌋, counted from 0.
//
// # Units and errors
//
// Intervals are in model periods (Problem.Years converts); costs and
// tolerances in the currency of the schedule. States and actions are
// indices; names live in Problem.States and Problem.Actions. Build reports
// every fault of the model, the schedule and the plan at once
// (*condition.Fault, *costs.Fault, *Fault with field, index and state);
// Plan.Validate reports the plan's alone, without building; reaching an iteration cap is a Status, not an error. Messages are
// prefixed "inspect:".
//
// # References
//
// H. Luss, Maintenance policies when deterioration can be observed by
// inspections, Operations Research 24(2), 1976 (the structural results the
// tests check). E. L. Porteus, Management Science 18, 1971. M. L.
// Puterman, Markov Decision Processes, Wiley 1994, chapters 6 and 11. H. C.
// Tijms, A First Course in Stochastic Models, Wiley 2003, chapter 7. S. M.
// Ross, Applied Probability Models with Optimization Applications,
// Holden-Day 1970.
package inspect
