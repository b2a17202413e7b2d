// Quantiles of the standard normal distribution, for the coverage factor of
// the uncertainty band (`--confidence`).
#pragma once

namespace baroz {

/// Inverse of the standard normal cumulative distribution function Phi:
/// the x with Phi(x) = p.
///
/// `p`: probability, in (0, 1). Returns x (dimensionless), with a relative
/// error below 1e-12 (in practice a few ulp) over the whole open interval;
/// Phi^-1(1 - p) = -Phi^-1(p) holds exactly. p = 0 gives -infinity, p = 1
/// +infinity, and p outside [0, 1] or NaN gives NaN.
double normal_quantile(double p);

/// Two-sided coverage factor k of a normal distribution: the central
/// interval [-k sigma, +k sigma] holds the probability `confidence`,
/// k = Phi^-1((1 + confidence) / 2), e.g. 0.95 -> 1.959963984540054.
///
/// `confidence`: in (0, 1), else throws baroz::Error (ExitCode::kUsage).
/// Returns k (dimensionless, > 0).
double two_sided_coverage_factor(double confidence);

}  // namespace baroz

// References:
//   P. J. Acklam, "An algorithm for computing the inverse normal cumulative
//     distribution function" (2003): rational approximations, relative error
//     < 1.15e-9, and the Halley refinement step.
//   E. Halley's method: x <- x - f/f' / (1 - f f''/(2 f'^2)).
//   NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.6.7.1
//     (cumulative distribution function of the standard normal).
