// Package feed models a lot of scrap lithium-ion cells and packs: it turns each line's nameplate energy into the masses of its components, collects what reaches the black
// mass, and propagates the model's uncertainty with a seeded Monte Carlo.
//
// # Cell model
//
// Cathode active mass is nameplate energy over nominal voltage and practical specific capacity,
// CAM = E / (V·q) (or charge over q when only Ah is known). Nameplate is used, never state of
// health: a worn cell still holds all its cathode. Anode graphite follows from the cathode's
// capacity through the N/P ratio and graphite's practical capacity. The current collectors follow
// from the same capacity: foil area = capacity / (2 × areal capacity), both sides coated, times
// each foil's thickness and density; the electrolyte fills the pores of the coated area (g per m² of coated side). Binder and
// conductive carbon, separator and casing are fractions of the cell mass per format, so the cell
// mass is (CAM + graphite + foils + electrolyte) / (1 − Σ fractions). Packs and modules add an
// overhead that never reaches the black mass.
//
// # Black mass
//
// Recovery of cathode material, graphite and binder into the fines, carry-over of Al and Cu foil
// and of casing metal, and the LiPF6 left after drying; reported by element and by compound.
//
// # Uncertainty
//
// Every parameter is a (min, most likely, max) range from data/model.csv or the chemistry
// catalogue, drawn from a triangular distribution. A chemistry's parameters are drawn once per
// sample and shared by every line of that chemistry (a systematic error, not an independent one
// per line); lines are first aggregated by (chemistry, format), so the Monte Carlo costs
// groups × samples, not lines × samples. Each parameter has its own random stream derived from the
// seed and the parameter's name, so adding a parameter does not shift the others.
//
// # Packages
//
// The lot model is this package; around it, each job has its own: [blackmass/feed/intake] reads
// manifests and assays into [Line] values, [blackmass/feed/leach] plans the leach of the drawn
// black mass, [blackmass/feed/assay] quotes, reconciles and explains assays, [blackmass/feed/dist]
// summarises draws, and [blackmass/feed/sheet] writes the workbook from a [Report].
package lot
