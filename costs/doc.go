// Package costs holds the money side of a maintenance model: running costs
// per condition state, action costs per action and state, discounting and
// the interest factors of engineering economy.
//
// Key types: Schedule (the cost figures of one class of equipment), Period
// (the length of a model period, with the calendar convention: a period's
// work belongs to the calendar year in which the period starts), Discount
// (a rate per year with its period, or a factor per period; built once by
// Rate or Factor and asked for Factor()), and the factor functions
// (DiscountFactor, SeriesPresentWorth, CapitalRecovery, ...).
//
// Conventions. Costs are in constant prices (real terms) of one currency.
// A discount rate is per year; a discount factor is per model period:
// gamma = (1 + rate)^(-periodYears). fixpoint charges a period's costs at
// its start, so a level cost stream over n periods is worth
// (1 - gamma^n)/(1 - gamma) = (1+i)(P/A, i, n) with gamma = 1/(1+i). The
// tabulated interest factors (P/A, A/P, ...) keep the tables' own
// end-of-period convention. Nominal rates are turned into real ones by the
// Fisher relation (1+nominal) = (1+real)(1+inflation).
//
// Errors. Validation reports every fault at once (errors.Join of *Fault
// values that carry the field, state and action index); a cost must be a
// finite number within ±MaxCost. Messages are prefixed "costs:".
//
// References. Interest factors: any engineering-economy text, e.g.
// L. Blank and A. Tarquin, Engineering Economy, compound interest tables.
package costs
