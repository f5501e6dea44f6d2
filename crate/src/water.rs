//! Water properties (density, viscosity, vapour pressure) from published correlations.

use serde::{Deserialize, Serialize};

/// Kind of water.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Water {
    /// Fresh (pure) water.
    Fresh,
    /// Standard seawater, absolute salinity 35.16504 g/kg.
    Sea,
}

/// Properties of water at one temperature and atmospheric pressure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WaterProperties {
    /// kg/m^3. Density.
    pub density: f64,
    /// Pa s. Dynamic viscosity.
    pub dynamic_viscosity: f64,
    /// m^2/s. Kinematic viscosity.
    pub kinematic_viscosity: f64,
    /// Pa. Saturation vapour pressure.
    pub vapour_pressure: f64,
}

/// deg C. Lowest and highest temperature accepted.
pub const TEMPERATURE_RANGE: (f64, f64) = (0.0, 40.0);

/// Properties of `water` at `temperature` deg C (0 to 40 deg C).
pub fn properties(water: Water, temperature: f64) -> WaterProperties {
    // Placeholder until the correlations land (being written now).
    let _ = (water, temperature);
    WaterProperties { density: 998.2, dynamic_viscosity: 1.0016e-3, kinematic_viscosity: 1.0034e-6, vapour_pressure: 2339.0 }
}
