// Package recover plans the stages after the leach: impurity removal by pH, manganese removal by
// oxidative precipitation, cobalt-nickel solvent extraction, the cobalt and nickel products, lithium
// as carbonate or phosphate, and the sodium sulfate effluent. Each Monte Carlo sample's liquor is
// taken through the stages the flowsheet lists, in order, from balanced reactions, charge balance
// and Faraday's law; every parameter is a range from the tables (data/recover_*.csv), drawn per
// sample. The planner keeps a ledger of every element (liquor and reagents in; products, cakes,
// gases and effluent out) so that the balance can be checked sample by sample.
package recover
