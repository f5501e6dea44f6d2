//! Prescribed rigid motion of each foil: heave of the pivot and pitch about it.
//!
//! `y_i(t) = y0_i + r(t) heave_i sin(2 pi f t - phase_i)` and
//! `theta_i(t) = pitch_mean_i + r(t) pitch_i sin(2 pi f t - phase_i + pitch_lead_i)`, with `r(t)`
//! the smooth-start ramp (`0.5 (1 - cos(pi t / T_ramp))` for `t < T_ramp`, then 1). With frequency
//! 0 the foil stays at its mean pose (an impulsive start from rest, as in Wagner's problem).

use crate::detmath::DetMath;
use std::f64::consts::PI;

use crate::case::Foil;

/// Pose and rates of one foil at one instant.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pose {
    /// m. Pivot position.
    pub pivot: [f64; 2],
    /// m/s. Pivot velocity.
    pub pivot_velocity: [f64; 2],
    /// rad. Pitch angle, nose-up positive.
    pub theta: f64,
    /// rad/s. Pitch rate, nose-up positive.
    pub theta_dot: f64,
}

impl Pose {
    /// m. World position of a body point given in chord units from the leading edge
    /// (`xi` along the chord towards the TE, `eta` towards the upper surface).
    #[inline]
    pub fn to_world(&self, body: [f64; 2], chord: f64, pivot_fraction: f64) -> [f64; 2] {
        let (s, c) = self.theta.dsin_cos();
        let rx = chord * (body[0] - pivot_fraction);
        let ry = chord * body[1];
        // Nose-up pitch is a clockwise rotation by theta.
        [
            self.pivot[0] + c * rx + s * ry,
            self.pivot[1] - s * rx + c * ry,
        ]
    }

    /// m/s. Velocity of the rigid-body point at world position `p`.
    #[inline]
    pub fn velocity_at(&self, p: [f64; 2]) -> [f64; 2] {
        let rx = p[0] - self.pivot[0];
        let ry = p[1] - self.pivot[1];
        // Angular velocity about +z is -theta_dot; omega x r = -theta_dot (-ry, rx).
        [
            self.pivot_velocity[0] + self.theta_dot * ry,
            self.pivot_velocity[1] - self.theta_dot * rx,
        ]
    }

    /// Unit vector along the chord from the leading edge to the trailing edge.
    #[inline]
    pub fn chord_direction(&self) -> [f64; 2] {
        let (s, c) = self.theta.dsin_cos();
        [c, -s]
    }
}

/// The prescribed motion of one foil, in SI units and radians.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Motion {
    /// rad/s. Circular frequency 2 pi f.
    pub omega: f64,
    /// m. Heave amplitude.
    pub heave: f64,
    /// rad. Pitch amplitude.
    pub pitch: f64,
    /// rad. Mean pitch.
    pub pitch_mean: f64,
    /// rad. Pitch lead over heave.
    pub pitch_lead: f64,
    /// rad. Phase lag behind foil 0.
    pub phase: f64,
    /// m. Pivot position at the mean pose.
    pub pivot_mean: [f64; 2],
    /// s. Duration of the smooth start (0 = none).
    pub ramp_time: f64,
}

impl Motion {
    /// The motion of `foil` at frequency `frequency` Hz with a smooth start of `ramp_time` s.
    pub fn new(foil: &Foil, frequency: f64, ramp_time: f64) -> Motion {
        let pitch_mean = foil.pitch_mean.to_radians();
        let pivot_mean = [
            foil.x + foil.chord * foil.pivot * pitch_mean.dcos(),
            foil.y - foil.chord * foil.pivot * pitch_mean.dsin(),
        ];
        let oscillating = frequency > 0.0;
        Motion {
            omega: 2.0 * PI * frequency,
            heave: if oscillating { foil.heave } else { 0.0 },
            pitch: if oscillating {
                foil.pitch.to_radians()
            } else {
                0.0
            },
            pitch_mean,
            pitch_lead: foil.pitch_lead.to_radians(),
            phase: foil.phase.to_radians(),
            pivot_mean,
            ramp_time: if oscillating { ramp_time } else { 0.0 },
        }
    }

    /// The same motion without the smooth start.
    pub fn without_ramp(&self) -> Motion {
        Motion {
            ramp_time: 0.0,
            ..*self
        }
    }

    fn ramp(&self, t: f64) -> (f64, f64) {
        if self.ramp_time <= 0.0 || t >= self.ramp_time {
            (1.0, 0.0)
        } else if t <= 0.0 {
            (0.0, 0.0)
        } else {
            let a = PI / self.ramp_time;
            (0.5 * (1.0 - (a * t).dcos()), 0.5 * a * (a * t).dsin())
        }
    }

    /// Pose at time `t` (s).
    pub fn pose(&self, t: f64) -> Pose {
        let (r, rdot) = self.ramp(t);
        let ph = self.omega * t - self.phase;
        let (sh, ch) = ph.dsin_cos();
        let (sp, cp) = (ph + self.pitch_lead).dsin_cos();
        let y = self.heave * r * sh;
        let ydot = self.heave * (rdot * sh + r * self.omega * ch);
        let theta = self.pitch_mean + self.pitch * r * sp;
        let theta_dot = self.pitch * (rdot * sp + r * self.omega * cp);
        Pose {
            pivot: [self.pivot_mean[0], self.pivot_mean[1] + y],
            pivot_velocity: [0.0, ydot],
            theta,
            theta_dot,
        }
    }

    /// rad. Effective angle of attack at the pivot, `theta - atan(ydot / U)`.
    pub fn angle_of_attack(&self, t: f64, speed: f64) -> f64 {
        let p = self.pose(t);
        p.theta - (p.pivot_velocity[1] / speed).datan()
    }
}

/// Samples per cycle used for kinematic extremes (amplitude of the TE, largest angle of attack).
pub const EXTREME_SAMPLES: usize = 720;

/// m. Peak-to-peak trailing-edge excursion over one cycle of the motion without ramp.
pub fn trailing_edge_excursion(motion: &Motion, chord: f64, pivot: f64) -> f64 {
    let m = motion.without_ramp();
    if m.omega == 0.0 {
        return 0.0;
    }
    let period = 2.0 * PI / m.omega;
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for i in 0..EXTREME_SAMPLES {
        let te =
            m.pose(period * i as f64 / EXTREME_SAMPLES as f64)
                .to_world([1.0, 0.0], chord, pivot);
        lo = lo.min(te[1]);
        hi = hi.max(te[1]);
    }
    hi - lo
}

/// rad. Largest absolute effective angle of attack over one cycle of the motion without ramp.
pub fn max_angle_of_attack(motion: &Motion, speed: f64) -> f64 {
    let m = motion.without_ramp();
    if m.omega == 0.0 {
        return m.pitch_mean.abs();
    }
    let period = 2.0 * PI / m.omega;
    (0..EXTREME_SAMPLES)
        .map(|i| {
            m.angle_of_attack(period * i as f64 / EXTREME_SAMPLES as f64, speed)
                .abs()
        })
        .fold(0.0, f64::max)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn foil() -> Foil {
        Foil {
            chord: 0.1,
            thickness: 0.12,
            span: 0.4,
            x: 0.0,
            y: 0.0,
            pivot: 0.25,
            heave: 0.05,
            pitch: 15.0,
            pitch_mean: 0.0,
            pitch_lead: 90.0,
            phase: 0.0,
            rig: None,
        }
    }

    #[test]
    fn rates_are_derivatives_of_the_pose() {
        let m = Motion::new(&foil(), 1.0, 0.7);
        for t in [0.1, 0.5, 0.9, 1.7] {
            let h = 1e-6;
            let (a, b, p) = (m.pose(t - h), m.pose(t + h), m.pose(t));
            assert!(((b.pivot[1] - a.pivot[1]) / (2.0 * h) - p.pivot_velocity[1]).abs() < 1e-6);
            assert!(((b.theta - a.theta) / (2.0 * h) - p.theta_dot).abs() < 1e-6);
        }
    }

    #[test]
    fn nose_up_raises_the_leading_edge() {
        let mut f = foil();
        f.pitch_mean = 10.0;
        let m = Motion::new(&f, 0.0, 0.0);
        let p = m.pose(0.0);
        let le = p.to_world([0.0, 0.0], f.chord, f.pivot);
        let te = p.to_world([1.0, 0.0], f.chord, f.pivot);
        assert!(le[1] > te[1]);
        // x, y is the leading edge at the mean pose (design.md section 4).
        assert!(le[0].abs() < 1e-15 && le[1].abs() < 1e-15);
    }

    #[test]
    fn practice_worked_example_angle_of_attack() {
        // practice.md 3.1 worked example (computed there): c = 0.1 m, U = 0.5 m/s, f = 1 Hz,
        // h0 = 0.075 m, theta0 = 20 deg, feathering: alpha_max about 23 deg (atan(2 pi f h0 / U) - theta0).
        let mut f = foil();
        f.heave = 0.075;
        f.pitch = 20.0;
        let m = Motion::new(&f, 1.0, 0.0);
        let a = max_angle_of_attack(&m, 0.5).to_degrees();
        let expect = (2.0 * PI * 0.075 / 0.5_f64).datan().to_degrees() - 20.0;
        assert!((a - expect).abs() < 0.05, "{a} vs {expect}");
    }
}
