//! The density model of a continuous exposure, for stabilised
//! density-ratio weights (Robins, Hernán & Brumback, Epidemiology
//! 2000;11:550-560; Hernán & Robins, *Causal Inference: What If*, 2020,
//! section 12.4): the denominator is a normal linear model of the exposure
//! on the adjustment terms, with the residual standard deviation from the
//! usual n - p divisor; the numerator is the exposure's marginal normal
//! density, with its sample mean and standard deviation (n - 1 divisor).
//! Each row's stabilised weight is numerator / denominator at its own
//! exposure.

use super::Nuisance;
use crate::data::{largest_magnitude, unit_scale};
use crate::model::{Ols, linear_predictor};
use crate::problem::Problem;
use crate::{Error, Result};
use nalgebra::DVector;

/// A fitted exposure density and the stabilised weights.
#[derive(Debug, Clone)]
pub struct DoseDensity {
    /// Coefficients of the exposure's linear model (in the exposure's
    /// units per unit of the propensity design's scaled terms).
    pub coef: DVector<f64>,
    /// Its residual standard deviation.
    pub sigma: f64,
    /// The exposure's (weighted) mean.
    pub mean: f64,
    /// The exposure's (weighted) standard deviation.
    pub sd: f64,
    /// Each row's residual in the linear model, over `sigma`.
    pub z: Vec<f64>,
    /// Each row's stabilised weight.
    pub weights: Vec<f64>,
}

/// The normal density at `z` standard deviations, over the deviation.
fn density(z: f64, sd: f64) -> f64 {
    (-0.5 * z * z).exp() / (sd * (2.0 * std::f64::consts::PI).sqrt())
}

impl Nuisance for DoseDensity {
    fn fit(p: &Problem, w: Option<&[f64]>, _full: Option<&DoseDensity>) -> Result<DoseDensity> {
        let rows = p.propensity_rows();
        // In the exposure's unit (a power of two, exact), so that squares
        // of doses of any magnitude stay finite; the weights and standard
        // scores do not depend on it, the reported mean and spreads are
        // given back in the data's units.
        let unit = unit_scale(largest_magnitude(p.a()));
        let scaled: Vec<f64> = p.a().iter().map(|x| x * unit).collect();
        let a = &scaled[..];
        let ols = Ols::fit(&rows, a, w)?;
        if ols.df <= 0.0 {
            return Err(Error::Numerical(
                "the exposure's linear model has no residual degrees of freedom".into(),
            ));
        }
        let sigma = (ols.rss / ols.df).sqrt();
        let wt = |i: usize| w.map_or(1.0, |w| w[i]);
        let (s, t) = (0..a.len()).fold((0.0, 0.0), |(s, t), i| (s + wt(i) * a[i], t + wt(i)));
        let mean = s / t;
        let ss: f64 = (0..a.len()).map(|i| wt(i) * (a[i] - mean).powi(2)).sum();
        let sd = (ss / (t - 1.0)).sqrt();
        if !(sigma > 0.0 && sd > 0.0) {
            return Err(Error::Numerical(
                "the exposure's density has no spread (the adjustment terms predict it exactly)".into(),
            ));
        }
        let fitted = linear_predictor(&rows, &ols.coef);
        let z: Vec<f64> = a.iter().zip(&fitted).map(|(a, f)| (a - f) / sigma).collect();
        let weights = a
            .iter()
            .zip(&z)
            .map(|(&x, &zi)| density((x - mean) / sd, sd) / density(zi, sigma))
            .collect();
        Ok(DoseDensity {
            coef: ols.coef / unit,
            sigma: sigma / unit,
            mean: mean / unit,
            sd: sd / unit,
            z,
            weights,
        })
    }
}
