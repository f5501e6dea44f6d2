//! # Units, frames and signs (written once; everything else refers here)
//!
//! **Units.** SI throughout: metres, seconds, kilograms, newtons, watts. Angles in the case file
//! and in outputs are degrees; inside the solver they are radians. Circulation is m^2/s.
//!
//! **Frame.** The foils' mean positions are fixed; the water streams along +x at speed `U`
//! (`flow.speed`). y is up. Lift is the force along +y; thrust is the force along -x (upstream).
//!
//! **Motion** of foil i (pivot heave and pitch about the pivot, nose-up positive):
//! `y_i(t) = y0_i + heave_i sin(2 pi f t - phase_i)`,
//! `theta_i(t) = pitch_mean_i + pitch_i sin(2 pi f t - phase_i + pitch_lead_i)`.
//! `phase_i` is how far foil i lags foil 0 (foil 0 has phase 0). `pitch_lead = 90 deg` is
//! feathering. `x, y` in the case file are the leading edge at the mean pose (heave 0, pitch
//! `pitch_mean`). The smooth start multiplies the oscillating terms by
//! `0.5 (1 - cos(pi t / T_ramp))` for `t < T_ramp`.
//!
//! **Gap** between a fore and a hind foil: streamwise distance from the fore foil's trailing edge
//! to the hind foil's leading edge at mean pose, in chords of the fore foil. Leading edge to
//! leading edge is the gap plus one chord for equal chords.
//!
//! **Dimensionless groups.** Strouhal number `St = f A / U` with `A` the peak-to-peak
//! trailing-edge excursion over a cycle; heave-based `St_h = 2 f h0 / U`. Reduced frequency
//! `k = pi f c / U` (semichord based). Reynolds number `Re = U c / nu`.
//! Effective angle of attack at the pivot: `alpha(t) = theta(t) - atan(ydot_pivot / U)`.
//!
//! **Coefficients** of foil i, with `q = rho U^2 / 2`: force / (q c_i s_i); moment about the
//! pivot (nose-up positive) / (q c_i^2 s_i); input power / (q U c_i s_i). Input power is the power
//! the actuators deliver to the water, `-F . v_pivot - M theta_dot`. Propulsive efficiency
//! `eta = mean thrust U / mean input power`, reported only where both are positive. Totals use
//! the summed planform area. The span only scales 2D results; the flow is two-dimensional.
//!
//! **Geometry.** Sections are closed polygons whose nodes run clockwise from the trailing edge:
//! along the lower surface to the leading edge, then along the upper surface back to the trailing
//! edge. Each panel's tangent points from its first node to its second; its normal is the tangent
//! turned 90 degrees counter-clockwise, which points out of the foil.
//!
//! **Circulation and vorticity** are counter-clockwise positive. A foil making positive lift has
//! negative bound circulation (steady lift per span `-rho U Gamma`); the starting vortex it sheds
//! is positive. In the wake view, counter-clockwise particles are one colour and clockwise ones
//! another; the legend names them.
//!
//! **Time statistics.** Means are over whole cycles after the start-up transient: cycles
//! `max(ceil(ramp_cycles), cycles / 2)` to the last; the summary says which. A run with frequency
//! 0 reports its final values.
