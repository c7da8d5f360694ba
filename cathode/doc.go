// Package cathode provides the chemistry blackmass stands on: standard atomic weights, a chemical
// formula parser, molar masses and element fractions, oxidation-state and charge bookkeeping,
// theoretical specific capacity, the catalogue of cathode chemistries with their labels, and the
// dissolution stoichiometry of each species on each acid-leach route.
//
// The package does no I/O of its own: tables are parsed from an [io/fs.FS] (by default the
// embedded tables of package blackmass/data).
//
// # Basis
//
// Atomic weights are the CIAAW 2021 standard atomic weights; where the standard weight is an
// interval the IUPAC conventional value is used (for example Li 6.94, C 12.011, S 32.06). The
// Faraday constant is the exact CODATA 2018 value. Molar masses are in g/mol, which is kg/kmol,
// so per-kg results use the same numbers.
//
// # Dissolution
//
// Acid and reductant demands are never typed in per chemistry. They follow from a charge balance:
// each metal in the solid is given an oxidation state (fixed ones for Li, Al, O, F, ...; the
// transition metals share what is left, so only their average is known), each element is given
// the state it ends in after the leach route (Li+, M2+, Al3+, H3PO4, HF, FePO4 in the residue,
// H2O for oxide oxygen), and the difference fixes the electrons to supply or remove and the H+
// consumed. See [Dissolve].
package cathode
