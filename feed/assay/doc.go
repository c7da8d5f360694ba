// Package assay works with lab assays of black mass: it quotes the leach of material already
// shredded from an assay and its weight ([QuoteFrom]: elements mapped to likely species), sets an
// estimate beside an assay ([Reconcile]: differences in combined standard uncertainties), and
// explains an assay as a chemistry mix ([InferMix]: weighted non-negative least squares with
// bootstrap ranges). Reading assay files is the intake package's job.
package assay
