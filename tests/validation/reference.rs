//! Reference values copied from published theory, each with its source. The tables of
//! Theodorsen's lift, Garrick's thrust and power, and Wagner's and Küssner's functions were
//! computed from the closed forms by an independent script (numpy/scipy) that also re-derived them
//! with a spectral solution of the linearised flat-plate problem; figures here are rounded as
//! printed there.

/// Theodorsen (1935, NACA Report 496): lift of a flat plate in pure heave `h = h0 sin(wt)`,
/// `C_L = (h0/c) |C_L^| sin(wt + phase)`; columns: reduced frequency k (semichord based),
/// `|C_L^| / (h0/c)`, phase (deg). Closed form `C_L^/(h0/c) = 2 pi k^2 - 4 pi i k C(k)`.
pub const THEODORSEN_HEAVE: [(f64, f64, f64); 4] = [
    (0.1, 1.0567, -98.36),
    (0.5, 3.8084, -80.57),
    (1.0, 8.4370, -53.46),
    (2.0, 26.9644, -28.56),
];

/// Theodorsen (1935): pure pitch `theta = theta0 sin(wt)` about the quarter chord (a = -1/2);
/// `|C_L^| / theta0` (per rad) and phase (deg).
/// Closed form `C_L^/theta0 = i pi k + pi a k^2 + 2 pi C(k) [1 + i k (1/2 - a)]`.
pub const THEODORSEN_PITCH_QUARTER: [(f64, f64, f64); 4] = [
    (0.1, 5.3254, -2.64),
    (0.5, 4.5815, 33.11),
    (1.0, 6.3888, 67.46),
    (2.0, 12.5852, 100.69),
];

/// Theodorsen (1935): pure pitch about the third chord (a = -1/3).
pub const THEODORSEN_PITCH_THIRD: [(f64, f64, f64); 4] = [
    (0.1, 5.3173, -3.59),
    (0.5, 4.4635, 29.37),
    (1.0, 6.0576, 61.75),
    (2.0, 11.2981, 91.83),
];

/// Garrick (1936, NACA Report 567), pure heave: k, `C_T/(h0/c)^2`, `C_P/(h0/c)^2`, efficiency.
/// `C_T = 4 pi k^2 (F^2 + G^2)(h0/c)^2`, `C_P = 4 pi k^2 F (h0/c)^2` with `C(k) = F + iG`.
pub const GARRICK_HEAVE: [(f64, f64, f64, f64); 3] = [
    (0.25, 0.40365, 0.54393, 0.74210),
    (0.5, 1.19456, 1.87847, 0.63592),
    (1.0, 3.78304, 6.77874, 0.55807),
];

/// Garrick (1936) for combined heave and pitch about the third chord, pitch leading heave by
/// 90 deg: `h0/c = 0.05`, `k = 1`, `theta0 = 0.05 rad` (feathering parameter 0.5). Thrust and
/// power coefficients, efficiency, lift amplitude and phase (deg, against `sin(wt)` of heave).
pub const GARRICK_COMBINED: (f64, f64, f64, f64, f64) =
    (0.006541, 0.009714, 0.67339, 0.19620, -94.57);

/// Wagner (1925) function `Phi(s)`, circulatory lift growth after an impulsive start, s in
/// semichords travelled; exact values by numerical Laplace inversion of `K1(p)/(p (K0 + K1))`.
pub const WAGNER: [(f64, f64); 6] = [
    (2.0, 0.66929),
    (4.0, 0.75797),
    (6.0, 0.81255),
    (10.0, 0.87504),
    (20.0, 0.93665),
    (50.0, 0.97676),
];

/// Küssner function `psi(s)` (Küssner 1936), which also gives the bound-circulation growth in
/// Wagner's problem, `Gamma(s)/Gamma_inf = psi(s)` (derived in the same script; no printed source
/// was found, so this check is secondary).
pub const KUSSNER: [(f64, f64); 4] = [
    (4.0, 0.69454),
    (6.0, 0.77313),
    (10.0, 0.85614),
    (20.0, 0.93119),
];
