// Package calibrate learns the model's biases from the bench's own assays: per element and per
// chemistry family and format, a multiplicative factor on the kg the model sends to the black
// mass, fitted from lots whose black mass was weighed and assayed.
//
// # Data
//
// For each assayed lot and element: y, the measured kg (assay mass fraction × dry weighed mass)
// with standard uncertainty u; and the estimate broken down by part, μ_p kg from each (family,
// format) part of the lot, with the lot's estimate standard deviation σ. A value below the
// limit of detection L enters as the moments of a uniform on [0, L]: y = L/2, u² = L²/12.
//
// # Model
//
// Each part's kg is scaled by the factor θ_c of its cell c:
//
//	y_i = Σ_c θ_c x_ic + ε_i,   x_ic = Σ_{p in c} μ_ip,   ε_i ~ N(0, v_i),   v_i = u_i² + (r_i σ_i)²
//
// so a lot that mixes chemistries informs each family in proportion to its share of the
// estimate. A (family, format) cell with fewer than Options.MinCellLots share-weighted lots has
// no factor of its own: it shares its family's pooled factor (Format ""). A second fit by family
// alone serves the formats no assayed lot held (Element.FamilyFactors). A part with no factor at
// all stays as estimated (factor 1).
//
// Prior: θ_c ~ N(1, s_c²), independent, with s_c the estimate's own relative spread (the median
// of SD/kg over the cell's parts) unless Options.PriorRelSD sets it: today's model, trusted as
// far as it claims. One lot with the estimate's spread weighs about as much as the prior, so a
// few lots move a factor a little and many lots a lot.
//
// Likelihood: the noise of a lot is the assay's variance plus the estimate's, both known, so
// the posterior is Gaussian in closed form (Bayesian linear regression with known noise):
//
//	A = diag(1/s²) + Σ_i x_i x_iᵀ / v_i,   Cov = A⁻¹,   mean = Cov (diag(1/s²)·1 + Σ_i x_i y_i / v_i)
//
// The fit is made twice: the second time r_i, the ratio of the lot's calibrated to its
// uncalibrated estimate, scales the estimate's spread (a calibrated estimate's spread scales with
// it); in the first pass r_i = 1. Each element is fitted on its own.
//
// Why linear in kg rather than in log space: a mixed lot's estimate is a sum over its parts,
// which is linear in the factors; in log space it becomes a log of a sum, which needs an
// optimiser and a Laplace approximation, and its leave-one-out a refit per lot. With the
// model's relative spreads (10-30 %) a Gaussian on kg differs little from a log-normal, and the
// closed form gives the exact posterior and the exact leave-one-out in milliseconds for a
// thousand lots.
//
// # Leave-one-out
//
// Each lot is predicted from the others by a rank-one downdate of the posterior
// (Sherman-Morrison): with h = xᵀ Cov x, w = 1/v and ŷ = xᵀ mean, the other lots predict
// (ŷ − w h y)/(1 − w h) with variance h/(1 − w h) + v for the measured value; z is the
// standardised difference. v keeps the full fit's spread ratio r, the one thing the lot itself
// contributes to its own prediction. The report's "after" figures use these predictions, so no
// lot grades a fit it took part in:
//   - bias: the mean of ln(measured/estimate), before (the model) and after (leave-one-out);
//   - coverage: the share of lots whose measured value falls within the P10-P90 of what the
//     assay would read (mean ± 1.2816·sd, the estimate's spread and the assay's uncertainty
//     together), before and after; 80 % is what the range claims;
//   - disagreeing lots: kept lots with |z| > Options.DisagreeZ, named with their z.
//
// # Outliers
//
// An assay that disagrees wildly (a unit slip, a sample mix-up) must not drag the fit. Two rules,
// each naming the lot and the element; a lot that fails either is left out of every element's
// fit (an assay wrong in one element is suspect in all), unless Options.Keep names it:
//   - ratio: measured/estimate outside [1/4, 4] (a censored value: the estimate above 4 times
//     the limit). The smallest slip, a decimal point, is a factor 10; the geometric midpoint
//     between agreement and it is √10 ≈ 3.2, and 4 leaves room for an honest bias plus the
//     spread. It catches slips even where the estimate's spread is so wide (an unknown
//     chemistry, relative sd near 1) that z cannot;
//   - z: leave-one-out |z| > 4, the worst lot first, then refit, until none is left. Under the
//     model z is standard normal and P(|z| > 4) = 6.3e-5: of a thousand honest lots assayed for
//     four elements, a quarter of a lot is left out on average, while a tenfold slip with a 15 %
//     spread gives z of several tens. One lot at a time, because a gross outlier shifts its
//     neighbours' predictions until it is out.
//
// Options.Exclude leaves lots out by name. A fit that would leave out more than half the
// assayed lots is refused (the model and the assays disagree as a whole: units, or the prior),
// and fewer than Options.MinLots usable lots (3 by default) give an error wrapping ErrTooFewLots
// that says how many are needed; an element with fewer gets no factors.
//
// # Applying a calibration
//
// Calibration is plain data (JSON, versioned by FormatVersion). Calibration.Sampler takes the
// (element, family, format) keys a lot's Monte Carlo needs and draws, per sample, from the
// marginal posterior of just the factors those keys use, jointly within an element: the
// correlated deviation L·z (L its Cholesky factor, z standard normal) is turned into a log-normal
// draw with the posterior's mean and standard deviation, since a factor on a mass cannot be
// negative and a factor few lots inform can have a spread near its mean; Sampler.DrawWith takes each element's stream from
// a dist.Drawer. Each sample's kg of an element from a part is multiplied by its factor's draw
// for that sample. The Monte Carlo's own spread stays as it was and the posterior's is added to
// it; a part without a factor keeps factor 1 rather than a draw from the prior, so a calibration
// never widens what it has learnt nothing about.
package calibrate
