//! The cumulative-flux trait every meteoroid model implements.
//!
//! Kept apart from its implementations so that model-building code depends on the trait
//! alone (a published formula, a table, or a future model are interchangeable).

use super::EnvironmentError;

/// A cumulative meteoroid flux model.
///
/// Convention (ECSS-E-ST-10-04C Rev.1 §10.2.2.2a): the flux of particles of mass `>= m`
/// onto **one face** of a randomly tumbling flat plate, unshielded, without gravitational
/// focusing, at 1 AU, per m^2 per (Julian) year. A thin ribbon exposed on both faces is hit at
/// twice this rate per unit ribbon area; shielding and focusing are applied by the caller (see
/// [`super::LocalFactors`]).
pub trait FluxModel: Send + Sync + std::fmt::Debug {
    /// Short human-readable name of the model.
    fn name(&self) -> &str;

    /// Cumulative flux of particles with mass `>= mass_kg`, per m^2 per year.
    ///
    /// Evaluated inside sampling tables, so it returns a plain number: a non-finite or
    /// negative mass gives `NaN`. Use [`FluxModel::checked_flux_per_m2_per_year`] on user input.
    fn cumulative_flux_per_m2_per_year(&self, mass_kg: f64) -> f64;

    /// Masses (kg) over which the model was fitted or tabulated: `(lowest, highest)`.
    /// Outside this range values are extrapolations.
    fn valid_mass_range_kg(&self) -> (f64, f64);

    /// [`FluxModel::cumulative_flux_per_m2_per_year`] with the mass validated first: it must
    /// be finite and `> 0`.
    fn checked_flux_per_m2_per_year(&self, mass_kg: f64) -> Result<f64, EnvironmentError> {
        if !(mass_kg.is_finite() && mass_kg > 0.0) {
            return Err(EnvironmentError::InvalidArgument {
                name: "mass_kg",
                value: mass_kg,
                rule: "must be finite and > 0",
            });
        }
        Ok(self.cumulative_flux_per_m2_per_year(mass_kg))
    }
}
