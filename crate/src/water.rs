//! Water properties (density, viscosity, vapour pressure) from published correlations, at
//! atmospheric pressure (101.325 kPa).
//!
//! | property | fresh water | seawater (S_P = 35, S_A = 35.16504 g/kg) |
//! |---|---|---|
//! | density | CIPM formula, Tanaka et al. 2001 | UNESCO EOS-80 one-atmosphere equation, Millero & Poisson 1981 |
//! | dynamic viscosity | Landolt-Boernstein V/3a formula after Millero | Sharqawy et al. 2010 salinity factor on the fresh value |
//! | vapour pressure | Wagner & Pruss 2002 (IAPWS saturation equation) | the fresh-water value (conservative) |
//!
//! Over 0 to 30 deg C they agree with IAPWS-95 / IAPWS-2008 / TEOS-10 reference values (rounded
//! to the table's digits) within 0.004 kg/m^3 (fresh), 0.009 kg/m^3 (sea), 0.07 % in viscosity and
//! 0.25 Pa in vapour pressure (measured by the water fixture test in `tests/case`). Outside
//! [`TEMPERATURE_RANGE`] the formulas are extrapolated; case validation rejects such temperatures.

use crate::detmath::DetMath;
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

/// Practical salinity of standard seawater (PSS-78), used by the EOS-80 density.
pub const SEA_PRACTICAL_SALINITY: f64 = 35.0;

/// kg/kg. Absolute (reference-composition) salinity of standard seawater, 35.16504 g/kg, used by
/// the Sharqawy et al. 2010 viscosity factor.
pub const SEA_ABSOLUTE_SALINITY: f64 = 0.035_165_04;

/// Properties of `water` at `temperature` deg C (0 to 40 deg C).
pub fn properties(water: Water, temperature: f64) -> WaterProperties {
    let t = temperature;
    let (density, dynamic_viscosity) = match water {
        Water::Fresh => (fresh_density(t), fresh_viscosity(t)),
        Water::Sea => (sea_density(t), sea_viscosity(t)),
    };
    WaterProperties {
        density,
        dynamic_viscosity,
        kinematic_viscosity: dynamic_viscosity / density,
        // Seawater's vapour pressure is about 2 % below pure water's (Raoult's law; Sharqawy et al.
        // 2010). Using the pure-water value lowers the cavitation number slightly, which errs on
        // the safe side for a cavitation screen.
        vapour_pressure: vapour_pressure(t),
    }
}

/// kg/m^3. Density of air-free pure water (standard mean ocean water isotopes) at 101.325 kPa.
///
/// CIPM recommended formula: M. Tanaka, G. Girard, R. Davis, A. Peuto, N. Bignell, "Recommended
/// table for the density of water between 0 deg C and 40 deg C based on recent experimental
/// reports", Metrologia 38 (2001) 301-309, eq. (1). `t` in deg C (ITS-90).
pub fn fresh_density(t: f64) -> f64 {
    const A1: f64 = -3.983_035; // deg C
    const A2: f64 = 301.797; // deg C
    const A3: f64 = 522_528.9; // deg C^2
    const A4: f64 = 69.348_81; // deg C
    const A5: f64 = 999.974_950; // kg/m^3
    A5 * (1.0 - (t + A1).powi(2) * (t + A2) / (A3 * (t + A4)))
}

/// kg/m^3. Density of standard seawater (practical salinity 35) at one atmosphere.
///
/// UNESCO EOS-80 one-atmosphere equation of state: F. J. Millero and A. Poisson, "International
/// one-atmosphere equation of state of seawater", Deep-Sea Research 28A (1981) 625-629; also
/// UNESCO Technical Papers in Marine Science 36 (1981) and 44 (1983). The pure-water term is
/// Bigg's (1967) SMOW polynomial used by EOS-80. EOS-80 is written in IPTS-68 temperature, so
/// `t` (ITS-90, deg C) is converted with t68 = 1.00024 t90.
pub fn sea_density(t: f64) -> f64 {
    let s = SEA_PRACTICAL_SALINITY;
    let t = 1.000_24 * t;
    let rho_w = 999.842_594
        + t * (6.793_952e-2
            + t * (-9.095_290e-3 + t * (1.001_685e-4 + t * (-1.120_083e-6 + t * 6.536_332e-9))));
    let b = 8.244_93e-1 + t * (-4.089_9e-3 + t * (7.643_8e-5 + t * (-8.246_7e-7 + t * 5.387_5e-9)));
    let c = -5.724_66e-3 + t * (1.022_7e-4 - t * 1.654_6e-6);
    let d = 4.831_4e-4;
    rho_w + b * s + c * s.dpowf(1.5) + d * s * s
}

/// Pa s. Dynamic viscosity of pure water at atmospheric pressure.
///
/// Landolt-Boernstein, New Series, vol. V/3a (1986), formula after F. J. Millero:
/// mu = mu_20 10^[(1.1709 (20 - t) - 0.001827 (t - 20)^2) / (t + 89.93)], mu_20 = 1.002 mPa s.
pub fn fresh_viscosity(t: f64) -> f64 {
    const MU_20: f64 = 1.002e-3; // Pa s at 20 deg C
    let exponent = (1.1709 * (20.0 - t) - 1.827e-3 * (t - 20.0).powi(2)) / (t + 89.93);
    MU_20 * 10f64.dpowf(exponent)
}

/// Pa s. Dynamic viscosity of standard seawater at atmospheric pressure.
///
/// M. H. Sharqawy, J. H. Lienhard V, S. M. Zubair, "Thermophysical properties of seawater: a
/// review of existing correlations and data", Desalination and Water Treatment 16 (2010)
/// 354-380, eq. 22: mu_sw = mu_w (1 + A S + B S^2), S in kg/kg, with A and B below, applied to
/// the pure-water viscosity of [`fresh_viscosity`].
pub fn sea_viscosity(t: f64) -> f64 {
    let s = SEA_ABSOLUTE_SALINITY;
    let a = 1.541 + 1.998e-2 * t - 9.52e-5 * t * t;
    let b = 7.974 - 7.561e-2 * t + 4.724e-4 * t * t;
    fresh_viscosity(t) * (1.0 + a * s + b * s * s)
}

/// Pa. Saturation vapour pressure of pure water.
///
/// W. Wagner and A. Pruss, "The IAPWS formulation 1995 for the thermodynamic properties of
/// ordinary water substance for general and scientific use", J. Phys. Chem. Ref. Data 31 (2002)
/// 387-535, eq. 2.5 (the IAPWS saturation-pressure equation). `t` in deg C.
pub fn vapour_pressure(t: f64) -> f64 {
    const T_C: f64 = 647.096; // K, critical temperature
    const P_C: f64 = 22.064e6; // Pa, critical pressure
    const A: [f64; 6] = [
        -7.859_517_83,
        1.844_082_59,
        -11.786_649_7,
        22.680_741_1,
        -15.961_871_9,
        1.801_225_02,
    ];
    let temp = t + 273.15;
    let tau = 1.0 - temp / T_C;
    let sum = A[0] * tau
        + A[1] * tau.dpowf(1.5)
        + A[2] * tau.powi(3)
        + A[3] * tau.dpowf(3.5)
        + A[4] * tau.powi(4)
        + A[5] * tau.dpowf(7.5);
    P_C * (T_C / temp * sum).dexp()
}
