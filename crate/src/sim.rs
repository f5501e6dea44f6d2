//! The time-stepping simulation: panels on every foil, one linear system per step, a free wake.
//!
//! Method (Katz & Plotkin 2001, Low-Speed Aerodynamics, ch. 11 and 13): constant-strength source
//! and doublet panels on each foil with the Dirichlet condition of zero perturbation potential
//! inside every foil; the source strengths carry the no-penetration condition. Each trailing edge
//! carries a short doublet panel whose strength is the potential jump at the trailing edge (the
//! Kutta condition of Morino); at its far end a point vortex of the previous step's bound
//! circulation closes the older wake, so the vortex shed each step is the change of bound
//! circulation (Kelvin's theorem). Shed vortices become free Krasny blobs, convected with the
//! second-order Adams-Bashforth scheme. Pressures come from the unsteady Bernoulli equation with
//! the surface potential differentiated in time by second-order backward differences.

use crate::detmath::{larger, smaller, DetMath};
use nalgebra::{Complex, DMatrix, DVector};
use std::f64::consts::PI;

use crate::case::Case;
use crate::error::CaseError;
use crate::fast;
use crate::geometry;
use crate::kernels;
use crate::kinematics::{Motion, Pose};
use crate::summary::Summary;
use crate::water;

/// Fraction of the trailing edge's travel relative to the water over one step at which the newest
/// shed vortex is placed. Katz & Plotkin (2001, section 13.8) recommend 0.2 to 0.3 for a
/// lumped-vortex wake; 0.3 reproduces Wagner's lift growth within 1 % from two semichords on (the
/// validation tests), where 0.5 is 2 % high.
pub const SHED_FRACTION: f64 = 0.3;

/// Chords behind its trailing edge over which a foil's newest shed vortices are treated as a
/// chain of doublet panels in the solve (the near wake); beyond, they act through their flux.
pub const NEAR_WAKE_CHORDS: f64 = 0.3;

/// `(0..n).map(f).collect()`, on all cores in native builds (each item is computed exactly as in
/// the sequential map, so results do not depend on the number of threads); sequential in wasm,
/// sequential when already on a worker of the thread pool (a sweep runs whole simulations in
/// parallel, and splitting each step's small loops again only adds scheduling), and sequential
/// below `min_items` items (waking the pool costs more than a small loop: the default tandem
/// case, about 230 particles, ran 10 to 40 % slower on two threads than on one).
pub(crate) fn par_map<T: Send, F: Fn(usize) -> T + Sync + Send>(
    n: usize,
    min_items: usize,
    f: F,
) -> Vec<T> {
    #[cfg(not(target_arch = "wasm32"))]
    {
        use rayon::prelude::*;
        if !parallel(n, min_items) {
            (0..n).map(f).collect()
        } else {
            (0..n).into_par_iter().map(f).collect()
        }
    }
    #[cfg(target_arch = "wasm32")]
    {
        let _ = min_items;
        (0..n).map(f).collect()
    }
}

/// Wake particles below which convection runs on one thread (see [`par_map`]).
const PARALLEL_PARTICLES: usize = 1024;

/// Rows of the coupling block below which it is assembled on one thread (see [`par_map`]).
#[cfg(not(target_arch = "wasm32"))]
const PARALLEL_ROWS: usize = 512;

/// Whether a loop of `n` items runs on the thread pool (see [`par_map`]).
#[cfg(not(target_arch = "wasm32"))]
fn parallel(n: usize, min_items: usize) -> bool {
    n >= min_items && rayon::current_thread_index().is_none() && rayon::current_num_threads() >= 2
}

/// Dot product in four independent partial sums (so the loop vectorises).
fn dot(a: &[f64], b: &[f64]) -> f64 {
    let mut acc = [0.0; 4];
    let (ca, cb) = (a.chunks_exact(4), b.chunks_exact(4));
    let (ra, rb) = (ca.remainder(), cb.remainder());
    for (x, y) in ca.zip(cb) {
        for k in 0..4 {
            acc[k] += x[k] * y[k];
        }
    }
    let mut s = (acc[0] + acc[1]) + (acc[2] + acc[3]);
    for (x, y) in ra.iter().zip(rb) {
        s += x * y;
    }
    s
}

/// Calls `f(row, &mut buf[row * width..(row + 1) * width])` for every row of `buf` and collects
/// what it returns, on all cores like [`par_map`] (and sequentially where it is).
fn par_rows<T: Send, F: Fn(usize, &mut [f64]) -> T + Sync + Send>(
    buf: &mut [f64],
    width: usize,
    f: F,
) -> Vec<T> {
    #[cfg(not(target_arch = "wasm32"))]
    {
        use rayon::prelude::*;
        if parallel(buf.len() / width.max(1), PARALLEL_ROWS) {
            return buf
                .par_chunks_mut(width)
                .enumerate()
                .map(|(i, row)| f(i, row))
                .collect();
        }
    }
    buf.chunks_mut(width)
        .enumerate()
        .map(|(i, row)| f(i, row))
        .collect()
}

/// Chords (of the largest foil) from every foil's chord line within which wake particles are
/// never merged by distance.
pub const MERGE_CLEAR_CHORDS: f64 = 2.0;

/// Largest chords. Particles farther than this from every foil's chord line are the far wake of
/// `numerics.far_wake_refresh`: their velocity is evaluated only every that many steps. (In a
/// 20-cycle run of the high-Strouhal example with every particle kept, mean thrust moved from the
/// every-step run by 0.06 % at 2 chords with a refresh of 4 steps, and by 0.04 % at 4 chords
/// with 8 steps, whose step at 4,000 particles took 24 to 39 % less time in two step benches.)
pub const REFRESH_CLEAR_CHORDS: f64 = 4.0;

/// Opening ratio of the fast summation (cell radius over distance).
pub const TREE_THETA: f64 = 0.5;
/// Relative tolerance of the fast summation's far-field expansions (1e-6: far below the
/// discretisation error, which the validation tests put near 1e-2).
pub const TREE_TOLERANCE: f64 = 1e-6;

/// Panels per group in the foils' two-level far-field expansions.
const GROUP_PANELS: usize = 16;

/// Multipole expansion of some of a foil's singularities (panels `range`).
#[derive(Debug, Clone)]
struct Expansion {
    centre: [f64; 2],
    radius: f64,
    /// m. Distance beyond the radius at which its nodal vortices act as point vortices to the
    /// tolerance ([`fast::point_vortex_cut`] times their core).
    clearance: f64,
    moments: Vec<Complex<f64>>,
    range: (usize, usize),
}

impl Expansion {
    /// m/s. Velocity at `p` from the expansion, when `p` is far enough for it.
    fn far_velocity(&self, p: [f64; 2]) -> Option<[f64; 2]> {
        let dz = Complex::new(p[0] - self.centre[0], p[1] - self.centre[1]);
        let d = (dz.re * dz.re + dz.im * dz.im).sqrt();
        if self.radius < TREE_THETA * d && d - self.radius > self.clearance {
            let order = self.moments.len() - 1;
            let p_used = fast::terms_needed(self.radius / d, TREE_TOLERANCE, order);
            let t = Complex::new(1.0, 0.0) / dz;
            let mut acc = Complex::new(0.0, 0.0);
            for mm in self.moments[..=p_used].iter().rev() {
                acc = acc * t + mm;
            }
            let w = acc * t;
            Some([w.re, -w.im])
        } else {
            None
        }
    }
}

/// Far-field expansion of a foil's source panels taken as point sources at their midpoints
/// (strength `sigma l`), the midpoint rule the coupling of two foils uses beyond ten panel
/// lengths: `phi = Re[b_0 log(z - c) - sum b_n / (n (z - c)^n)]`, `b_n = sum s_k (z_k - c)^n`,
/// `s_k = sigma_k l_k / (2 pi)`.
#[derive(Debug, Clone)]
struct SourceExpansion {
    centre: [f64; 2],
    radius: f64,
    /// m. Longest panel.
    longest: f64,
    moments: Vec<Complex<f64>>,
}

impl SourceExpansion {
    /// m^2/s per (m/s). Source potential at `p` when every panel is beyond ten panel lengths and
    /// the expansion converges to [`TREE_TOLERANCE`] there; `None` otherwise.
    fn potential(&self, p: [f64; 2]) -> Option<f64> {
        let dz = Complex::new(p[0] - self.centre[0], p[1] - self.centre[1]);
        let d = (dz.re * dz.re + dz.im * dz.im).sqrt();
        if !(self.radius < TREE_THETA * d && d - self.radius > 10.0 * self.longest) {
            return None;
        }
        let p_used = fast::terms_needed(self.radius / d, TREE_TOLERANCE, self.moments.len() - 1);
        let t = Complex::new(1.0, 0.0) / dz;
        let mut acc = self.moments[p_used] / p_used as f64;
        for n in (1..p_used).rev() {
            acc = acc * t + self.moments[n] / n as f64;
        }
        let log_abs = 0.5 * (dz.re * dz.re + dz.im * dz.im).dln();
        let b0 = self.moments[0];
        // Re[b_0 log dz]: b_0 is real (a sum of real strengths).
        Some(b0.re * log_abs - (acc * t).re)
    }
}

/// A foil's panels as point doublets at their midpoints (the far rule of the coupling of two
/// foils), in columns.
struct PointDoublets {
    /// m. Midpoint x.
    x: Vec<f64>,
    /// m. Midpoint y.
    y: Vec<f64>,
    /// Unit normal, x.
    nx: Vec<f64>,
    /// Unit normal, y.
    ny: Vec<f64>,
    /// m. Panel length over 2 pi.
    weight: Vec<f64>,
    /// m^2. Squared distance (ten panel lengths) within which the exact panel is used.
    reach_sq: Vec<f64>,
}

impl PointDoublets {
    fn new(b: &Body) -> PointDoublets {
        PointDoublets {
            x: b.mids.iter().map(|m| m[0]).collect(),
            y: b.mids.iter().map(|m| m[1]).collect(),
            nx: b.normals.iter().map(|n| n[0]).collect(),
            ny: b.normals.iter().map(|n| n[1]).collect(),
            weight: b.lengths.iter().map(|&l| l / (2.0 * PI)).collect(),
            reach_sq: b.lengths.iter().map(|&l| 100.0 * l * l).collect(),
        }
    }
}

/// The [`SourceExpansion`] of foil `b`'s current source strengths.
fn source_expansion(b: &Body) -> SourceExpansion {
    let order = ((TREE_TOLERANCE.dln() / TREE_THETA.dln()).ceil() as usize).max(1);
    let (lo, hi) = bounding_box(&b.nodes, 0.0);
    let c = [0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1])];
    let radius = b
        .mids
        .iter()
        .map(|p| ((p[0] - c[0]).powi(2) + (p[1] - c[1]).powi(2)).sqrt())
        .fold(0.0, f64::max);
    let cc = Complex::new(c[0], c[1]);
    let mut moments = vec![Complex::new(0.0, 0.0); order + 1];
    for k in 0..b.panels() {
        let xi = Complex::new(b.mids[k][0], b.mids[k][1]) - cc;
        let mut pw = Complex::new(b.sigma[k] * b.lengths[k] / (2.0 * PI), 0.0);
        for mm in moments.iter_mut() {
            *mm += pw;
            pw *= xi;
        }
    }
    SourceExpansion {
        centre: c,
        radius,
        longest: b.lengths.iter().copied().fold(0.0, f64::max),
        moments,
    }
}

/// A foil's expansions: the whole foil, and its panel groups.
#[derive(Debug, Clone)]
struct BodyExpansion {
    whole: Expansion,
    groups: Vec<Expansion>,
}

/// Loads and pose of one foil at one instant.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct FoilLoads {
    /// m. Heave displacement of the pivot from its mean position.
    pub heave: f64,
    /// deg. Pitch angle, nose-up positive.
    pub pitch: f64,
    /// deg. Effective angle of attack at the pivot.
    pub angle_of_attack: f64,
    /// Lift coefficient (force +y).
    pub lift_coefficient: f64,
    /// Thrust coefficient (force upstream, -x).
    pub thrust_coefficient: f64,
    /// Moment coefficient about the pivot, nose-up positive.
    pub moment_coefficient: f64,
    /// Input-power coefficient.
    pub power_coefficient: f64,
    /// N. Lift.
    pub lift: f64,
    /// N. Thrust.
    pub thrust: f64,
    /// N m. Moment about the pivot, nose-up positive.
    pub moment: f64,
    /// W. Input power (actuators to fluid).
    pub power: f64,
    /// m^2/s. Bound circulation, counter-clockwise positive (lift = -rho U circulation when steady).
    pub circulation: f64,
}

impl FoilLoads {
    /// Names, with units, of the numbers of [`FoilLoads::values`], in order (the layout of the
    /// browser bindings' loads buffers).
    pub const FIELDS: [&'static str; 11] = [
        "heave (m)",
        "pitch (deg)",
        "angle_of_attack (deg)",
        "lift_coefficient",
        "thrust_coefficient",
        "moment_coefficient",
        "power_coefficient",
        "lift (N)",
        "thrust (N)",
        "moment (N m)",
        "power (W)",
    ];

    /// The loads as numbers in the order of [`FoilLoads::FIELDS`].
    pub fn values(&self) -> [f64; 11] {
        [
            self.heave,
            self.pitch,
            self.angle_of_attack,
            self.lift_coefficient,
            self.thrust_coefficient,
            self.moment_coefficient,
            self.power_coefficient,
            self.lift,
            self.thrust,
            self.moment,
            self.power,
        ]
    }
}

/// One foil's geometry, motion and solver state.
#[derive(Debug, Clone)]
struct Body {
    chord: f64,
    span: f64,
    pivot: f64,
    motion: Motion,
    /// Chord units, clockwise from the trailing edge, first = last.
    section: Vec<[f64; 2]>,
    /// Unknown index of this body's first panel.
    offset: usize,
    /// Doublet and source influence of this body's panels on its own collocation points
    /// (row = collocation point, column = panel). Rigid motion leaves them unchanged.
    self_doublet: DMatrix<f64>,
    self_source: DMatrix<f64>,
    /// LU factors of `self_doublet` (single-foil fast path), made on first use.
    lu: Option<nalgebra::LU<f64, nalgebra::Dyn, nalgebra::Dyn>>,
    /// Inverse of `self_doublet`, row-major (several foils), made on first use.
    inverse: Vec<f64>,
    /// Doublet strengths of the step before the latest (several foils; empty before).
    mu_prev: Vec<f64>,
    /// m. Arc length from the trailing edge (lower side) to each collocation point.
    arc: Vec<f64>,
    // World geometry at the current instant.
    pose: Pose,
    nodes: Vec<[f64; 2]>,
    mids: Vec<[f64; 2]>,
    tangents: Vec<[f64; 2]>,
    normals: Vec<[f64; 2]>,
    lengths: Vec<f64>,
    velocities: Vec<[f64; 2]>,
    // Solution state.
    sigma: Vec<f64>,
    mu: Vec<f64>,
    circulation: f64,
    phi_prev: Vec<f64>,
    phi_prev2: Vec<f64>,
    shed_point: [f64; 2],
    /// Pressure coefficient at each collocation point at the latest solved instant (rig checks).
    cp: Vec<f64>,
}

impl Body {
    fn panels(&self) -> usize {
        self.section.len() - 1
    }

    fn trailing_edge(&self) -> [f64; 2] {
        self.nodes[0]
    }

    fn set_pose(&mut self, pose: Pose) {
        self.pose = pose;
        for (w, s) in self.nodes.iter_mut().zip(&self.section) {
            *w = pose.to_world(*s, self.chord, self.pivot);
        }
        let n = self.panels();
        for j in 0..n {
            let (a, b) = (self.nodes[j], self.nodes[j + 1]);
            let d = [b[0] - a[0], b[1] - a[1]];
            let l = (d[0] * d[0] + d[1] * d[1]).sqrt();
            let t = [d[0] / l, d[1] / l];
            self.lengths[j] = l;
            self.tangents[j] = t;
            self.normals[j] = [-t[1], t[0]];
            self.mids[j] = [0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])];
            self.velocities[j] = pose.velocity_at(self.mids[j]);
        }
    }

    /// World outline polygon of this body at pose `pose`.
    fn outline_at(&self, pose: &Pose) -> Vec<[f64; 2]> {
        self.section
            .iter()
            .map(|s| pose.to_world(*s, self.chord, self.pivot))
            .collect()
    }
}

fn new_body(foil: &crate::case::Foil, frequency: f64, ramp_time: f64, panels: usize) -> Body {
    let section = geometry::symmetric_section(foil.thickness, panels);
    new_body_from_section(
        section,
        foil.chord,
        foil.span,
        foil.pivot,
        Motion::new(foil, frequency, ramp_time),
    )
}

fn new_body_from_section(
    section: Vec<[f64; 2]>,
    chord: f64,
    span: f64,
    pivot: f64,
    motion: Motion,
) -> Body {
    let n = section.len() - 1;
    let mut body = Body {
        chord,
        span,
        pivot,
        motion,
        section,
        offset: 0,
        self_doublet: DMatrix::zeros(n, n),
        self_source: DMatrix::zeros(n, n),
        lu: None,
        inverse: Vec::new(),
        mu_prev: Vec::new(),
        arc: vec![0.0; n],
        pose: motion.pose(0.0),
        nodes: vec![[0.0; 2]; n + 1],
        mids: vec![[0.0; 2]; n],
        tangents: vec![[0.0; 2]; n],
        normals: vec![[0.0; 2]; n],
        lengths: vec![0.0; n],
        velocities: vec![[0.0; 2]; n],
        sigma: vec![0.0; n],
        mu: vec![0.0; n],
        circulation: 0.0,
        phi_prev: vec![0.0; n],
        phi_prev2: vec![0.0; n],
        shed_point: [0.0; 2],
        cp: vec![0.0; n],
    };
    body.set_pose(motion.pose(0.0));
    let mut s = 0.0;
    for j in 0..n {
        body.arc[j] = s + 0.5 * body.lengths[j];
        s += body.lengths[j];
    }
    for j in 0..n {
        for k in 0..n {
            let (a, b) = (body.nodes[k], body.nodes[k + 1]);
            if j == k {
                // Inside limit of the panel's own doublet; the source potential is continuous.
                body.self_doublet[(j, k)] = -0.5;
                body.self_source[(j, k)] = kernels::source_self_potential(body.lengths[k]);
            } else {
                body.self_doublet[(j, k)] = kernels::doublet_potential(a, b, body.mids[j]);
                body.self_source[(j, k)] = kernels::source_potential(a, b, body.mids[j]);
            }
        }
    }
    body
}

/// m. Two points: a segment's ends, or a box's lowest and highest corners.
type Segment = ([f64; 2], [f64; 2]);

/// Free wake particles (Krasny blobs), structure of arrays, oldest first.
#[derive(Debug, Clone, Default)]
struct Wake {
    x: Vec<f64>,
    y: Vec<f64>,
    gamma: Vec<f64>,
    /// m/s. Velocity at the particle's last evaluation (for Adams-Bashforth), NaN for a new
    /// particle.
    u_prev: Vec<[f64; 2]>,
    /// m/s per step. Change of velocity per step between the particle's last two evaluations
    /// (zero until it has two); a far-wake particle between evaluations moves with its velocity
    /// extrapolated along it (see [`Simulation::convect`]).
    du: Vec<[f64; 2]>,
    /// Step at which the particle's velocity was last evaluated.
    evaluated: Vec<usize>,
    owner: Vec<usize>,
}

impl Wake {
    fn len(&self) -> usize {
        self.x.len()
    }

    fn push(&mut self, p: [f64; 2], gamma: f64, owner: usize, step: usize) {
        self.x.push(p[0]);
        self.y.push(p[1]);
        self.gamma.push(gamma);
        self.u_prev.push([f64::NAN; 2]);
        self.du.push([0.0; 2]);
        self.evaluated.push(step);
        self.owner.push(owner);
    }

    /// m/s. Particle `i`'s velocity `steps` after its last evaluation, extrapolated along its
    /// change per step (its evaluated velocity itself at 0: `du` is always finite).
    fn extrapolated(&self, i: usize, steps: f64) -> [f64; 2] {
        let (u, du) = (self.u_prev[i], self.du[i]);
        [u[0] + steps * du[0], u[1] + steps * du[1]]
    }

    /// m/s. Velocity induced at `p` by all particles (direct Biot-Savart sum of Gaussian
    /// blobs; the reference the fast summation is checked against).
    fn velocity(&self, p: [f64; 2], delta_sq: f64) -> [f64; 2] {
        let mut u = [0.0; 2];
        for i in 0..self.x.len() {
            let v = fast::gaussian_velocity([self.x[i], self.y[i]], self.gamma[i], delta_sq, p);
            u[0] += v[0];
            u[1] += v[1];
        }
        u
    }

    /// The particles not marked in `skip`, as elements for the fast summation.
    fn elements_except(&self, skip: &[bool], delta_sq: f64) -> fast::Elements {
        let mut el = fast::Elements::default();
        for i in (0..self.len()).filter(|&i| !skip[i]) {
            el.push([self.x[i], self.y[i]], self.gamma[i], 0.0, delta_sq);
        }
        el
    }

    /// Merges consecutive same-sign particles of the same foil, pairwise, where `spacing(i)`
    /// (m, non-positive near the foils) exceeds their separation. Circulation and its first
    /// moment are conserved. Returns the number merged away.
    fn merge_by_distance(&mut self, foils: usize, spacing: impl Fn([f64; 2]) -> f64) -> usize {
        let n = self.len();
        let mut keep = vec![true; n];
        let mut pending: Vec<Option<(usize, f64)>> = vec![None; foils];
        let mut removed = 0;
        for i in 0..n {
            let o = self.owner[i];
            let p = [self.x[i], self.y[i]];
            let allowed = spacing(p);
            if allowed <= 0.0 {
                pending[o] = None;
                continue;
            }
            match pending[o] {
                Some((j, allowed_j)) if self.gamma[j] * self.gamma[i] > 0.0 => {
                    let d2 = (self.x[j] - p[0]).powi(2) + (self.y[j] - p[1]).powi(2);
                    let limit = allowed.min(allowed_j);
                    if d2 < limit * limit {
                        self.merge_into(j, i);
                        keep[i] = false;
                        removed += 1;
                        pending[o] = None;
                    } else {
                        pending[o] = Some((i, allowed));
                    }
                }
                _ => pending[o] = Some((i, allowed)),
            }
        }
        if removed > 0 {
            self.retain(&keep);
        }
        removed
    }

    /// Merges particle `i` into particle `j` (circulation-weighted position and velocity).
    fn merge_into(&mut self, j: usize, i: usize) {
        let (gi, gj) = (self.gamma[i], self.gamma[j]);
        let g = gi + gj;
        self.x[j] = (gj * self.x[j] + gi * self.x[i]) / g;
        self.y[j] = (gj * self.y[j] + gi * self.y[i]) / g;
        // Both velocities at the later of the two evaluations (the same step unless one is a
        // far-wake particle between its evaluations).
        let n = self.evaluated[i].max(self.evaluated[j]);
        let after = |k: usize| (n - self.evaluated[k]) as f64;
        let (ui, uj) = (
            self.extrapolated(i, after(i)),
            self.extrapolated(j, after(j)),
        );
        self.u_prev[j] = [(gj * uj[0] + gi * ui[0]) / g, (gj * uj[1] + gi * ui[1]) / g];
        let (di, dj) = (self.du[i], self.du[j]);
        self.du[j] = [(gj * dj[0] + gi * di[0]) / g, (gj * dj[1] + gi * di[1]) / g];
        self.evaluated[j] = n;
        self.gamma[j] = g;
    }

    /// Keeps the particles marked in `keep`, in order.
    fn retain(&mut self, keep: &[bool]) {
        let mut k = 0;
        for i in 0..self.len() {
            if keep[i] {
                self.x[k] = self.x[i];
                self.y[k] = self.y[i];
                self.gamma[k] = self.gamma[i];
                self.u_prev[k] = self.u_prev[i];
                self.du[k] = self.du[i];
                self.evaluated[k] = self.evaluated[i];
                self.owner[k] = self.owner[i];
                k += 1;
            }
        }
        self.x.truncate(k);
        self.y.truncate(k);
        self.gamma.truncate(k);
        self.u_prev.truncate(k);
        self.du.truncate(k);
        self.evaluated.truncate(k);
        self.owner.truncate(k);
    }

    /// Merges the oldest same-sign neighbours of the same foil, pairwise, until at most
    /// nine tenths of `cap` particles remain. Circulation and its first moment are conserved.
    fn coarsen(&mut self, cap: usize, foils: usize) {
        if self.len() <= cap {
            return;
        }
        let target = self.len() - cap * 9 / 10;
        let mut removed = 0;
        let mut keep = vec![true; self.len()];
        let mut pending: Vec<Option<usize>> = vec![None; foils];
        for i in 0..self.len() {
            if removed >= target {
                break;
            }
            let o = self.owner[i];
            match pending[o] {
                Some(j) if self.gamma[j] * self.gamma[i] > 0.0 => {
                    self.merge_into(j, i);
                    keep[i] = false;
                    removed += 1;
                    pending[o] = None;
                }
                _ => pending[o] = Some(i),
            }
        }
        self.retain(&keep);
    }
}

/// A running simulation of one case.
#[derive(Debug, Clone)]
pub struct Simulation {
    case: Case,
    bodies: Vec<Body>,
    wake: Wake,
    speed: f64,
    density: f64,
    dt: f64,
    total_steps: usize,
    steps: usize,
    delta_sq: f64,
    cap: usize,
    history: Vec<Vec<FoilLoads>>,
    impulse: Vec<[f64; 2]>,
    /// Near-wake doublet panels of the current step: start, end (m), strength (m^2/s).
    chain_panels: Vec<([f64; 2], [f64; 2], f64)>,
    /// Coupling rows of the several-foil system, kept from step to step (see `solve`).
    coupling: Vec<f64>,
    /// Fraction of the distance to the nearest foil below which neighbouring far-wake particles
    /// are merged (`numerics.wake_merge`; 0 = never).
    merge_ratio: f64,
    /// Steps between the velocity evaluations of far-wake particles (1 = every step).
    far_refresh: usize,
}

impl Simulation {
    /// Builds the foils and checks that they never overlap or touch during their motion.
    pub fn new(case: &Case) -> Result<Simulation, CaseError> {
        case.validate()?;
        let num = &case.numerics;
        let speed = case.flow.speed;
        let c0 = case.foils[0].chord;
        let (dt, total_steps, ramp_time) = if case.frequency > 0.0 {
            let period = 1.0 / case.frequency;
            let dt = period / num.steps_per_cycle as f64;
            (
                dt,
                num.steps_per_cycle * num.cycles,
                num.ramp_cycles * period,
            )
        } else {
            let dt = num.time_step.unwrap_or(0.02 * c0 / speed);
            let duration = num.duration.unwrap_or(20.0 * c0 / speed);
            (dt, (duration / dt).round().max(1.0) as usize, 0.0)
        };
        let mut bodies: Vec<Body> = case
            .foils
            .iter()
            .map(|f| new_body(f, case.frequency, ramp_time, num.panels))
            .collect();
        let mut offset = 0;
        for b in &mut bodies {
            b.offset = offset;
            offset += b.panels();
        }
        check_clearance(case, &bodies)?;
        let min_chord = case
            .foils
            .iter()
            .map(|f| f.chord)
            .fold(f64::INFINITY, f64::min);
        let delta = num.core_size * min_chord;
        let props = water::properties(case.flow.water, case.flow.temperature);
        Ok(Simulation {
            case: case.clone(),
            bodies,
            wake: Wake::default(),
            speed,
            density: props.density,
            dt,
            total_steps,
            steps: 0,
            delta_sq: delta * delta,
            cap: num.max_particles,
            history: Vec::with_capacity(total_steps),
            impulse: Vec::with_capacity(total_steps),
            chain_panels: Vec::new(),
            merge_ratio: num.wake_merge,
            far_refresh: num.far_wake_refresh,
            coupling: Vec::new(),
        })
    }

    /// The case being run.
    pub fn case(&self) -> &Case {
        &self.case
    }

    /// True once all steps of the case have been taken.
    pub fn is_finished(&self) -> bool {
        self.steps >= self.total_steps
    }

    /// s. Time of the latest solved instant (step `steps_taken() - 1`).
    pub fn time(&self) -> f64 {
        self.steps.saturating_sub(1) as f64 * self.dt
    }

    /// s. Time step.
    pub fn time_step(&self) -> f64 {
        self.dt
    }

    /// Steps taken so far.
    pub fn steps_taken(&self) -> usize {
        self.steps
    }

    /// Steps the case asks for in all.
    pub fn total_steps(&self) -> usize {
        self.total_steps
    }

    /// Free wake particles: x (m), y (m), circulation (m^2/s, counter-clockwise positive).
    /// Positions are at the start of the next step (after convection).
    pub fn particles(&self) -> (&[f64], &[f64], &[f64]) {
        (&self.wake.x, &self.wake.y, &self.wake.gamma)
    }

    /// m. Outline of foil `i` at the latest solved instant: closed polygon from the trailing
    /// edge along the lower surface to the leading edge and back along the upper surface.
    pub fn foil_outline(&self, i: usize) -> Vec<[f64; 2]> {
        self.bodies[i].nodes.clone()
    }

    /// Loads of every foil at the latest solved instant (empty before the first step).
    pub fn loads(&self) -> &[FoilLoads] {
        self.history.last().map(|v| v.as_slice()).unwrap_or(&[])
    }

    /// Loads of every step so far: `history()[step][foil]`, at times `step * time_step()`.
    pub fn history(&self) -> &[Vec<FoilLoads>] {
        &self.history
    }

    /// m^2/s^2 per (kg/m^3). Total vortex impulse per unit density, `sum Gamma (y, -x)` over the
    /// bound and free vorticity, after each step. The force on all foils together is
    /// `-rho d/dt` of it (Saffman 1992, ch. 3), up to terms with zero mean over a cycle.
    pub fn impulse_history(&self) -> &[[f64; 2]] {
        &self.impulse
    }

    /// m/s. Flow velocity at `p` (m): free stream, foils and wake, as used to convect the wake.
    pub fn velocity(&self, p: [f64; 2]) -> [f64; 2] {
        self.velocity_at(p)
    }

    /// m. Core radius of the wake's vortex blobs (`numerics.core_size` times the smallest chord).
    pub fn core_radius(&self) -> f64 {
        self.delta_sq.sqrt()
    }

    /// Sum of all circulation: bound plus free (m^2/s); zero by Kelvin's theorem.
    pub fn total_circulation(&self) -> f64 {
        self.bodies.iter().map(|b| b.circulation).sum::<f64>() + self.wake.gamma.iter().sum::<f64>()
    }

    /// Runs the remaining steps and returns the summary.
    pub fn run_to_end(&mut self) -> Summary {
        while !self.is_finished() {
            self.step();
        }
        self.summary()
    }

    /// Statistics of the steps taken so far (whole cycles after the transient).
    pub fn summary(&self) -> Summary {
        crate::summary::summarise(self)
    }

    pub(crate) fn density(&self) -> f64 {
        self.density
    }

    pub(crate) fn particle_cap(&self) -> usize {
        self.cap
    }

    /// Pressure coefficients `(p - p_inf) / (rho U^2 / 2)` of foil `i` at the latest solved
    /// instant, one per panel in outline order (see [`Simulation::foil_outline`]), from the same
    /// unsteady Bernoulli equation as the loads; zeros before the first step.
    pub fn pressure_coefficients(&self, i: usize) -> &[f64] {
        &self.bodies[i].cp
    }

    /// Advances one time step (solve, loads, wake convection). Does nothing once finished.
    pub fn step(&mut self) {
        if self.is_finished() {
            return;
        }
        let n = self.steps;
        let t = n as f64 * self.dt;
        let u_inf = [self.speed, 0.0];
        for b in &mut self.bodies {
            let pose = b.motion.pose(t);
            b.set_pose(pose);
        }
        // The newest particles of each foil near its trailing edge form a chain of doublet
        // panels from the shed point (the near wake, as in Katz & Plotkin 2001, section 13.12):
        // their potential enters the Dirichlet condition exactly. The chain ends in a closing
        // point vortex, and every other particle acts through its volume flux on each panel.
        let prev_circulation: Vec<f64> = self.bodies.iter().map(|b| b.circulation).collect();
        let chains = self.near_wake_chains();
        let mut in_chain = vec![false; self.wake.len()];
        for &i in chains.iter().flatten() {
            in_chain[i] = true;
        }
        let chained: Vec<usize> = (0..self.wake.len()).filter(|&i| in_chain[i]).collect();
        // One fast-summation tree over the free (not chained) particles at this instant serves
        // the onset flow on the foils; with the chained ones added directly, the shed points and
        // the convection.
        let tree = fast::Tree::new(
            &self.wake.elements_except(&in_chain, self.delta_sq),
            TREE_THETA,
            TREE_TOLERANCE,
        );
        let chained_velocity = |p: [f64; 2]| {
            let mut u = [0.0; 2];
            for &i in &chained {
                let c = [self.wake.x[i], self.wake.y[i]];
                let v = fast::gaussian_velocity(c, self.wake.gamma[i], self.delta_sq, p);
                u[0] += v[0];
                u[1] += v[1];
            }
            u
        };
        // Newest shed point behind each trailing edge.
        let shed_points: Vec<[f64; 2]> = self
            .bodies
            .iter()
            .map(|b| {
                let te = b.trailing_edge();
                let uw = tree.velocity(te);
                let uc = chained_velocity(te);
                let vte = b.pose.velocity_at(te);
                let rel = [
                    u_inf[0] + uw[0] + uc[0] - vte[0],
                    u_inf[1] + uw[1] + uc[1] - vte[1],
                ];
                [
                    te[0] + SHED_FRACTION * rel[0] * self.dt,
                    te[1] + SHED_FRACTION * rel[1] * self.dt,
                ]
            })
            .collect();
        for (b, sp) in self.bodies.iter_mut().zip(shed_points) {
            b.shed_point = sp;
        }
        let mut closures: Vec<([f64; 2], f64)> = Vec::with_capacity(self.bodies.len());
        let mut chain_panels: Vec<([f64; 2], [f64; 2], f64)> = Vec::new();
        for (bi, chain) in chains.iter().enumerate() {
            let mut start = self.bodies[bi].shed_point;
            let mut m = -prev_circulation[bi];
            for &i in chain {
                let end = [self.wake.x[i], self.wake.y[i]];
                chain_panels.push((start, end, m));
                m -= self.wake.gamma[i];
                start = end;
            }
            // The closing vortex carries the rest of the older wake's circulation.
            closures.push((start, -m));
        }
        let mut onset_phi: Vec<Vec<f64>> = Vec::with_capacity(self.bodies.len());
        for b in &mut self.bodies {
            let npan = b.panels();
            // Velocity and stream function of the free particles at the foil's nodes, and their
            // velocity at its collocation points (both come in order along the outline).
            let (at_nodes, um) = tree.eval_outline(&b.nodes, &b.mids);
            let psi: Vec<f64> = b
                .nodes
                .iter()
                .zip(&at_nodes)
                .map(|(&p, f)| {
                    let mut s = f.1;
                    for &(c, g) in &closures {
                        s += fast::gaussian_stream_function(c, g, 0.0, p);
                    }
                    s
                })
                .collect();
            let un: Vec<[f64; 2]> = at_nodes.iter().map(|f| f.0).collect();
            let mut phi = vec![0.0; npan];
            let mut acc = 0.0;
            for j in 0..npan {
                let v = b.velocities[j];
                let nn = b.normals[j];
                let flux = psi[j] - psi[j + 1];
                b.sigma[j] =
                    nn[0] * (v[0] - u_inf[0]) + nn[1] * (v[1] - u_inf[1]) - flux / b.lengths[j];
                // Free blobs: trapezoid rule on half panels. Point vortices: exact angle.
                let tt = b.tangents[j];
                let half = 0.5 * b.lengths[j];
                let ut_node = un[j][0] * tt[0] + un[j][1] * tt[1];
                let ut_mid = um[j][0] * tt[0] + um[j][1] * tt[1];
                let ut_next = un[j + 1][0] * tt[0] + un[j + 1][1] * tt[1];
                let mut exact_a = 0.0;
                let mut exact_b = 0.0;
                for &(c, g) in &closures {
                    exact_a += g * kernels::doublet_potential(b.nodes[j], b.mids[j], c);
                    exact_b += g * kernels::doublet_potential(b.mids[j], b.nodes[j + 1], c);
                }
                acc += 0.5 * half * (ut_node + ut_mid) + exact_a;
                phi[j] = acc;
                acc += 0.5 * half * (ut_mid + ut_next) + exact_b;
            }
            onset_phi.push(phi);
        }
        self.chain_panels = chain_panels;
        self.solve();
        // Loads.
        let q = 0.5 * self.density * self.speed * self.speed;
        let mut row = Vec::with_capacity(self.bodies.len());
        for (bi, b) in self.bodies.iter_mut().enumerate() {
            let npan = b.panels();
            // Total surface potential: doublet strength (the foils' own perturbation potential)
            // plus the onset potential; its arc-length derivative is the tangential velocity.
            let phi: Vec<f64> =
                b.mu.iter()
                    .zip(&onset_phi[bi])
                    .map(|(m, o)| m + o)
                    .collect();
            let dphi = surface_derivative(&phi, &b.arc);
            let (mut cfx, mut cfy, mut cm, mut cp_pow) = (0.0, 0.0, 0.0, 0.0);
            let u2 = self.speed * self.speed;
            for j in 0..npan {
                let dphidt = match n {
                    0 => 0.0,
                    1 => (phi[j] - b.phi_prev[j]) / self.dt,
                    _ => (3.0 * phi[j] - 4.0 * b.phi_prev[j] + b.phi_prev2[j]) / (2.0 * self.dt),
                };
                let tt = b.tangents[j];
                let v = b.velocities[j];
                let qt = (u_inf[0] - v[0]) * tt[0] + (u_inf[1] - v[1]) * tt[1] + dphi[j];
                let vref2 = (u_inf[0] - v[0]).powi(2) + (u_inf[1] - v[1]).powi(2);
                let cp = (vref2 - qt * qt - 2.0 * dphidt) / u2;
                b.cp[j] = cp;
                let nn = b.normals[j];
                let l = b.lengths[j];
                let f = [-cp * nn[0] * l, -cp * nn[1] * l];
                cfx += f[0];
                cfy += f[1];
                let r = [
                    b.mids[j][0] - b.pose.pivot[0],
                    b.mids[j][1] - b.pose.pivot[1],
                ];
                cm -= r[0] * f[1] - r[1] * f[0];
                cp_pow += cp * l * (nn[0] * v[0] + nn[1] * v[1]);
            }
            b.phi_prev2 = std::mem::replace(&mut b.phi_prev, phi);
            let c = b.chord;
            let lift_c = cfy / c;
            let thrust_c = -cfx / c;
            let moment_c = cm / (c * c);
            let power_c = cp_pow / (self.speed * c);
            let area = c * b.span;
            let rest = b.motion.pose(t);
            row.push(FoilLoads {
                heave: rest.pivot[1] - b.motion.pivot_mean[1],
                pitch: rest.theta.to_degrees(),
                angle_of_attack: b.motion.angle_of_attack(t, self.speed).to_degrees(),
                lift_coefficient: lift_c,
                thrust_coefficient: thrust_c,
                moment_coefficient: moment_c,
                power_coefficient: power_c,
                lift: lift_c * q * area,
                thrust: thrust_c * q * area,
                moment: moment_c * q * area * c,
                power: power_c * q * self.speed * area,
                circulation: b.circulation,
            });
        }
        self.history.push(row);
        // Shed: the change of bound circulation becomes a free blob at the shed point.
        for (bi, b) in self.bodies.iter().enumerate() {
            let prev = prev_circulation[bi];
            self.wake.push(b.shed_point, prev - b.circulation, bi, n);
        }
        self.impulse.push(self.vortex_impulse());
        self.convect(t, &tree, &chained, &in_chain);
        if self.merge_ratio > 0.0 {
            self.merge_far_wake();
        }
        self.wake.coarsen(self.cap, self.bodies.len());
        self.steps += 1;
    }

    /// Merges far-wake particles by distance from the foils (at the next instant's poses): two
    /// consecutive same-sign particles of one foil beyond [`MERGE_CLEAR_CHORDS`] merge when
    /// they are closer than `numerics.wake_merge` times their distance to the nearest foil's
    /// chord line. The wake's resolution as seen from the foils stays about the same while the
    /// particle count stays bounded (a particle's influence on a foil falls off with distance).
    fn merge_far_wake(&mut self) {
        let t_next = self.steps as f64 * self.dt + self.dt;
        let lines = self.chord_lines(t_next);
        let clear = MERGE_CLEAR_CHORDS * self.largest_chord();
        let ratio = self.merge_ratio;
        self.wake.merge_by_distance(self.bodies.len(), |p| {
            let d = lines
                .iter()
                .map(|&(a, b)| geometry::segment_distance(a, b, p))
                .fold(f64::INFINITY, f64::min);
            if d < clear {
                0.0
            } else {
                ratio * d
            }
        });
    }

    /// m. Each foil's chord line (leading edge, trailing edge) at time `t` (s).
    fn chord_lines(&self, t: f64) -> Vec<Segment> {
        self.bodies
            .iter()
            .map(|b| {
                let pose = b.motion.pose(t);
                (
                    pose.to_world([0.0, 0.0], b.chord, b.pivot),
                    pose.to_world([1.0, 0.0], b.chord, b.pivot),
                )
            })
            .collect()
    }

    /// m. The largest chord of the foils.
    fn largest_chord(&self) -> f64 {
        self.bodies.iter().map(|b| b.chord).fold(0.0, f64::max)
    }

    /// Indices of each foil's near-wake particles, newest first: consecutive particles of that foil
    /// within [`NEAR_WAKE_CHORDS`] chords of its trailing edge and clear of every other foil.
    fn near_wake_chains(&self) -> Vec<Vec<usize>> {
        let boxes: Vec<([f64; 2], [f64; 2])> = self
            .bodies
            .iter()
            .map(|b| bounding_box(&b.nodes, 0.1 * b.chord))
            .collect();
        let mut chains = vec![Vec::new(); self.bodies.len()];
        let mut open = vec![true; self.bodies.len()];
        for i in (0..self.wake.len()).rev() {
            let o = self.wake.owner[i];
            if !open[o] {
                if open.iter().all(|x| !x) {
                    break;
                }
                continue;
            }
            let b = &self.bodies[o];
            let p = [self.wake.x[i], self.wake.y[i]];
            let te = b.trailing_edge();
            let far = (p[0] - te[0]).powi(2) + (p[1] - te[1]).powi(2)
                > (NEAR_WAKE_CHORDS * b.chord).powi(2);
            let near_other = boxes.iter().enumerate().any(|(k, (lo, hi))| {
                k != o && p[0] >= lo[0] && p[0] <= hi[0] && p[1] >= lo[1] && p[1] <= hi[1]
            });
            if far || near_other {
                open[o] = false;
            } else {
                chains[o].push(i);
            }
        }
        chains
    }

    /// Solves the Dirichlet system for all doublet strengths at once. Each foil's own block is
    /// constant in the body frame (its LU factors are kept); the blocks coupling two foils are
    /// assembled each step.
    fn solve(&mut self) {
        if self.bodies.len() == 1 {
            self.solve_single();
            return;
        }
        for b in &mut self.bodies {
            if b.inverse.is_empty() {
                let inv = b
                    .self_doublet
                    .clone()
                    .try_inverse()
                    .expect("a closed foil's doublet block is non-singular");
                let n = b.panels();
                b.inverse = (0..n * n).map(|i| inv[(i / n, i % n)]).collect();
            }
        }
        let sources: Vec<SourceExpansion> = self.bodies.iter().map(source_expansion).collect();
        // Each foil's own sources at its own collocation points (a constant matrix times sigma).
        let own_sources: Vec<DVector<f64>> = self
            .bodies
            .iter()
            .map(|b| &b.self_source * DVector::from_column_slice(&b.sigma))
            .collect();
        let owners: Vec<(usize, usize)> = self
            .bodies
            .iter()
            .enumerate()
            .flat_map(|(bi, b)| (0..b.panels()).map(move |j| (bi, j)))
            .collect();
        let m = owners.len();
        let point_doublets: Vec<PointDoublets> =
            self.bodies.iter().map(PointDoublets::new).collect();
        // Rows are independent: assemble them on all cores into the kept buffer. Row `i` holds
        // the doublet influence of every other foil's panels on collocation point `i`
        // (trailing-edge panels included; the columns of its own foil are not used); each row
        // also gives its right-hand side and its own foil's trailing-edge panel influence.
        let mut coupling = std::mem::take(&mut self.coupling);
        coupling.resize(m * m, 0.0);
        let rows: Vec<(f64, f64)> = par_rows(&mut coupling, m, |row, entries| {
            let (pi, j) = owners[row];
            let p = &self.bodies[pi];
            let x = p.mids[j];
            let mut rhs = 0.0;
            for (qi, q) in self.bodies.iter().enumerate() {
                let nq = q.panels();
                if pi == qi {
                    rhs -= own_sources[pi][j];
                    continue;
                }
                let far_source = sources[qi].potential(x);
                let mut src = 0.0;
                // Beyond ten panel lengths the midpoint rule (a point doublet and a point
                // source) differs from the exact panel by less than (l / r)^2 / 12 = 0.08 % of
                // the entry. First every entry by that rule, in one loop without branches (it
                // vectorises); then, in panel order, the exact panels within ten lengths and
                // the sources when the foil's expansion does not reach this point.
                let pd = &point_doublets[qi];
                let out = &mut entries[q.offset..q.offset + nq];
                let mut near = false;
                let columns = pd.x.iter().zip(&pd.y).zip(pd.nx.iter().zip(&pd.ny));
                for ((e, ((mx, my), (nx, ny))), (w, reach)) in out
                    .iter_mut()
                    .zip(columns)
                    .zip(pd.weight.iter().zip(&pd.reach_sq))
                {
                    let rx = x[0] - mx;
                    let ry = x[1] - my;
                    let r2 = rx * rx + ry * ry;
                    *e = w * (rx * nx + ry * ny) / r2;
                    near |= r2 <= *reach;
                }
                if near || far_source.is_none() {
                    for (k, e) in out.iter_mut().enumerate() {
                        let mk = q.mids[k];
                        let r = [x[0] - mk[0], x[1] - mk[1]];
                        let r2 = r[0] * r[0] + r[1] * r[1];
                        if r2 > pd.reach_sq[k] {
                            if far_source.is_none() {
                                src += q.lengths[k] / (4.0 * PI) * r2.dln() * q.sigma[k];
                            }
                        } else {
                            let (na, nb) = (q.nodes[k], q.nodes[k + 1]);
                            src += kernels::source_potential(na, nb, x) * q.sigma[k];
                            *e = kernels::doublet_potential(na, nb, x);
                        }
                    }
                }
                rhs -= far_source.unwrap_or(0.0) + src;
                // Trailing-edge doublet panel of q, strength mu_last - mu_first (Kutta).
                let w = kernels::doublet_potential(q.trailing_edge(), q.shed_point, x);
                entries[q.offset + nq - 1] += w;
                entries[q.offset] -= w;
            }
            for &(ca, cb, mu) in &self.chain_panels {
                rhs -= mu * kernels::doublet_potential(ca, cb, x);
            }
            // This foil's own trailing-edge panel (the rank-one part of its block).
            let own = kernels::doublet_potential(p.trailing_edge(), p.shed_point, x);
            (rhs, own)
        });
        let x = match self.solve_blocks(&coupling, &rows) {
            Some(x) => x,
            None => {
                // Assemble the whole matrix and factor it.
                let mut a = DMatrix::<f64>::zeros(m, m);
                let mut rhs = DVector::<f64>::zeros(m);
                for (row, &(r, own)) in rows.iter().enumerate() {
                    let (pi, j) = owners[row];
                    let p = &self.bodies[pi];
                    let n = p.panels();
                    for col in 0..m {
                        a[(row, col)] = coupling[row * m + col];
                    }
                    for k in 0..n {
                        a[(row, p.offset + k)] = p.self_doublet[(j, k)];
                    }
                    a[(row, p.offset + n - 1)] += own;
                    a[(row, p.offset)] -= own;
                    rhs[row] = r;
                }
                a.lu()
                    .solve(&rhs)
                    .expect("the panel system is non-singular for separated foils")
                    .iter()
                    .copied()
                    .collect()
            }
        };
        self.coupling = coupling;
        for b in &mut self.bodies {
            let n = b.panels();
            if self.steps > 0 {
                b.mu_prev.clone_from(&b.mu);
            }
            b.mu.copy_from_slice(&x[b.offset..b.offset + n]);
            b.circulation = b.mu[0] - b.mu[n - 1];
        }
    }

    /// Block Gauss-Seidel on the system of the coupling rows `coupling` (row-major, `rows.len()`
    /// wide) with the right-hand sides and own trailing-edge influences `rows`: each foil's
    /// diagonal block is solved with its kept inverse plus the trailing-edge panel by
    /// Sherman-Morrison, starting from the previous step's solution. Returns `None` unless it
    /// converges to round-off (relative change, or estimated remaining error, below 1e-14)
    /// within 200 sweeps; the caller then factors the whole matrix.
    fn solve_blocks(&self, coupling: &[f64], rows: &[(f64, f64)]) -> Option<Vec<f64>> {
        let m = rows.len();
        // Start from the previous two steps' solutions extrapolated linearly (the previous one
        // alone at the first steps).
        let mut x = vec![0.0; m];
        for b in &self.bodies {
            let o = b.offset;
            if b.mu_prev.len() == b.mu.len() {
                for j in 0..b.panels() {
                    x[o + j] = 2.0 * b.mu[j] - b.mu_prev[j];
                }
            } else {
                x[o..o + b.panels()].copy_from_slice(&b.mu);
            }
        }
        let apply = |inv: &[f64], v: &[f64], out: &mut [f64]| {
            let n = v.len();
            for (j, o) in out.iter_mut().enumerate() {
                *o = dot(&inv[j * n..(j + 1) * n], v);
            }
        };
        // Each foil's inverse applied to its own trailing-edge column.
        let zs: Vec<Vec<f64>> = self
            .bodies
            .iter()
            .map(|b| {
                let n = b.panels();
                let w: Vec<f64> = rows[b.offset..b.offset + n].iter().map(|r| r.1).collect();
                let mut z = vec![0.0; n];
                apply(&b.inverse, &w, &mut z);
                z
            })
            .collect();
        let nmax = self.bodies.iter().map(|b| b.panels()).max().unwrap_or(0);
        let mut r = vec![0.0; nmax];
        let mut y = vec![0.0; nmax];
        let mut prev_change = f64::INFINITY;
        for _sweep in 0..200 {
            let mut change: f64 = 0.0;
            let mut size: f64 = 0.0;
            for (bi, b) in self.bodies.iter().enumerate() {
                let n = b.panels();
                for j in 0..n {
                    let row = b.offset + j;
                    let entries = &coupling[row * m..(row + 1) * m];
                    let mut acc = rows[row].0;
                    for (ci, c) in self.bodies.iter().enumerate() {
                        if ci != bi {
                            let span = c.offset..c.offset + c.panels();
                            acc -= dot(&entries[span.clone()], &x[span]);
                        }
                    }
                    r[j] = acc;
                }
                apply(&b.inverse, &r[..n], &mut y[..n]);
                let z = &zs[bi];
                let vz = z[n - 1] - z[0];
                let vy = y[n - 1] - y[0];
                let k = vy / (1.0 + vz);
                for j in 0..n {
                    let xi = y[j] - z[j] * k;
                    if !xi.is_finite() {
                        return None;
                    }
                    change = larger(change, (xi - x[b.offset + j]).abs());
                    size = larger(size, xi.abs());
                    x[b.offset + j] = xi;
                }
            }
            // Converged when the last change, or the error still left after it, is below
            // round-off. Block Gauss-Seidel contracts the error by about the same factor
            // rho = change / previous change each sweep, so the error after this sweep is about
            // change * rho / (1 - rho) (a geometric tail; trusted only when rho < 1/2, and not
            // after the first sweep, which has no previous change). For the default tandem case
            // this saves the fifth of five sweeps; results move by about 1e-13 relative.
            let rho = change / prev_change;
            let tail = if prev_change.is_finite() && rho < 0.5 {
                change * rho / (1.0 - rho)
            } else {
                change
            };
            // (tail <= change, so this includes the plain test on the change.)
            if tail <= 1e-14 * size {
                return Some(x);
            }
            prev_change = change;
        }
        None
    }

    /// One foil: the doublet matrix is constant in the body frame, so its LU factors are kept and
    /// the trailing-edge panel (a rank-one change) is added by the Sherman-Morrison formula.
    fn solve_single(&mut self) {
        let b = &mut self.bodies[0];
        let n = b.panels();
        if b.lu.is_none() {
            b.lu = Some(b.self_doublet.clone().lu());
        }
        let lu = b.lu.as_ref().expect("factored above");
        let mut rhs = DVector::<f64>::zeros(n);
        let mut w = DVector::<f64>::zeros(n);
        let sigma = DVector::from_column_slice(&b.sigma);
        let src = &b.self_source * &sigma;
        for j in 0..n {
            let mut r = -src[j];
            for &(ca, cb, m) in &self.chain_panels {
                r -= m * kernels::doublet_potential(ca, cb, b.mids[j]);
            }
            rhs[j] = r;
            w[j] = kernels::doublet_potential(b.nodes[0], b.shed_point, b.mids[j]);
        }
        let y = lu.solve(&rhs).expect("the panel system is non-singular");
        let z = lu.solve(&w).expect("the panel system is non-singular");
        let vy = y[n - 1] - y[0];
        let vz = z[n - 1] - z[0];
        let x = y - z * (vy / (1.0 + vz));
        for j in 0..n {
            b.mu[j] = x[j];
        }
        b.circulation = b.mu[0] - b.mu[n - 1];
    }

    fn vortex_impulse(&self) -> [f64; 2] {
        let mut imp = [0.0; 2];
        for i in 0..self.wake.len() {
            imp[0] += self.wake.gamma[i] * self.wake.y[i];
            imp[1] -= self.wake.gamma[i] * self.wake.x[i];
        }
        for b in &self.bodies {
            let n = b.panels();
            for k in 1..n {
                let g = b.mu[k - 1] - b.mu[k];
                imp[0] += g * b.nodes[k][1];
                imp[1] -= g * b.nodes[k][0];
            }
        }
        imp
    }

    /// m/s. Velocity at `p` from the free stream, the foils and the wake, by direct sums.
    fn velocity_at(&self, p: [f64; 2]) -> [f64; 2] {
        let mut u = self.wake.velocity(p, self.delta_sq);
        u[0] += self.speed;
        for b in &self.bodies {
            let v = self.body_velocity_direct(b, p);
            u[0] += v[0];
            u[1] += v[1];
        }
        u
    }

    /// m/s. Velocity at `p` induced by foil `b`'s singularities: its doublet panels (exactly
    /// point vortices at the nodes, each smoothed over the longer adjacent panel, at most the
    /// wake core: the scale on which the discrete sheet stands for the continuous one) and its
    /// source panels (exact panel formula).
    fn body_velocity_direct(&self, b: &Body, p: [f64; 2]) -> [f64; 2] {
        self.panels_velocity_direct(b, 0, b.panels(), p)
    }

    /// m/s. Direct velocity of panels `k0..k1` of foil `b` and of the nodal vortices at their
    /// starts (node 0, the trailing edge, carries none).
    fn panels_velocity_direct(&self, b: &Body, k0: usize, k1: usize, p: [f64; 2]) -> [f64; 2] {
        let mut u = [0.0; 2];
        for k in k0.max(1)..k1 {
            let g = b.mu[k - 1] - b.mu[k];
            let core = larger(b.lengths[k - 1], b.lengths[k]);
            let d2 = smaller(core * core, self.delta_sq);
            let v = fast::gaussian_velocity(b.nodes[k], g, d2, p);
            u[0] += v[0];
            u[1] += v[1];
        }
        for k in k0..k1 {
            let v = kernels::source_velocity(b.nodes[k], b.nodes[k + 1], p);
            u[0] += v[0] * b.sigma[k];
            u[1] += v[1] * b.sigma[k];
        }
        u
    }

    /// Multipole expansions of foil `b`'s singularities: one for the whole foil and one for
    /// each group of [`GROUP_PANELS`] panels, with the exact moments of each source panel
    /// (`integral of (z - c)^n ds`).
    fn body_expansion(&self, b: &Body) -> BodyExpansion {
        let n = b.panels();
        let groups: Vec<Expansion> = (0..n)
            .step_by(GROUP_PANELS)
            .map(|k0| self.panel_expansion(b, k0, (k0 + GROUP_PANELS).min(n)))
            .collect();
        // The whole foil's moments are the groups' shifted to its centre.
        let (c, radius) = fast::span(&b.nodes);
        let mut moments = vec![Complex::new(0.0, 0.0); groups[0].moments.len()];
        for g in &groups {
            let d = Complex::new(g.centre[0] - c[0], g.centre[1] - c[1]);
            fast::shift_moments(&g.moments, d, TREE_TOLERANCE, &mut moments);
        }
        let whole = Expansion {
            centre: c,
            radius,
            clearance: groups.iter().map(|g| g.clearance).fold(0.0, larger),
            moments,
            range: (0, n),
        };
        BodyExpansion { whole, groups }
    }

    /// Expansion of panels `k0..k1` of foil `b` (their sources and the nodal vortices at the
    /// start of each, node 0 excluded).
    fn panel_expansion(&self, b: &Body, k0: usize, k1: usize) -> Expansion {
        let order = ((TREE_TOLERANCE.dln() / TREE_THETA.dln()).ceil() as usize).max(1);
        let (c, radius) = fast::span(&b.nodes[k0..=k1]);
        let cc = Complex::new(c[0], c[1]);
        let mut m = vec![Complex::new(0.0, 0.0); order + 1];
        let reciprocals: Vec<f64> = (0..=order).map(|i| 1.0 / (i as f64 + 1.0)).collect();
        let mut core: f64 = 0.0;
        for k in k0.max(1)..k1 {
            let s = Complex::new(0.0, -(b.mu[k - 1] - b.mu[k]) / (2.0 * PI));
            let xi = Complex::new(b.nodes[k][0], b.nodes[k][1]) - cc;
            let mut pw = s;
            for mm in m.iter_mut() {
                *mm += pw;
                pw *= xi;
            }
            core = larger(core, larger(b.lengths[k - 1], b.lengths[k]));
        }
        for k in k0..k1 {
            let za = Complex::new(b.nodes[k][0], b.nodes[k][1]) - cc;
            let zb = Complex::new(b.nodes[k + 1][0], b.nodes[k + 1][1]) - cc;
            // 1 / e for the unit tangent e is its conjugate.
            let s = b.sigma[k] / (2.0 * PI);
            let e_inv_s = Complex::new(b.tangents[k][0] * s, -b.tangents[k][1] * s);
            let (mut pa, mut pb) = (za, zb);
            for (mm, inv) in m.iter_mut().zip(&reciprocals) {
                *mm += (pb - pa) * e_inv_s * *inv;
                pa *= za;
                pb *= zb;
            }
        }
        Expansion {
            centre: c,
            radius,
            clearance: fast::point_vortex_cut(TREE_TOLERANCE) * smaller(core, self.delta_sq.sqrt()),
            moments: m,
            range: (k0, k1),
        }
    }

    /// m/s. Velocity of foil `b` at `p`: the whole foil's expansion far away; near it, each
    /// panel group's expansion or, next to the group, its direct sum.
    fn body_velocity(&self, b: &Body, e: &BodyExpansion, p: [f64; 2]) -> [f64; 2] {
        if let Some(v) = e.whole.far_velocity(p) {
            return v;
        }
        let mut u = [0.0; 2];
        for g in &e.groups {
            let v = match g.far_velocity(p) {
                Some(v) => v,
                None => self.panels_velocity_direct(b, g.range.0, g.range.1, p),
            };
            u[0] += v[0];
            u[1] += v[1];
        }
        u
    }

    /// Moves the wake to the next instant (Adams-Bashforth 2; Euler for a new particle) and puts
    /// back outside any particle that ended inside a foil or within a quarter core of its surface.
    fn convect(&mut self, t: f64, tree: &fast::Tree, chained: &[usize], in_chain: &[bool]) {
        let np = self.wake.len();
        let new_from = np - self.bodies.len();
        let expansions: Vec<BodyExpansion> =
            self.bodies.iter().map(|b| self.body_expansion(b)).collect();
        // The tree holds the free particles of the start of the step (in index order; they have
        // not moved since) and gives their velocity with its own leaves as targets; the chained
        // ones and this step's new ones are summed directly, one group for each foil (they sit
        // near its trailing edge, so most particles are six cores clear of them all), and
        // the chained and new ones are evaluated one by one.
        let nb = self.bodies.len();
        let groups: Vec<fast::BlobGroup> = (0..nb)
            .map(|bi| {
                let mut el = fast::Elements::default();
                for i in chained.iter().copied().chain(new_from..np) {
                    if self.wake.owner[i] == bi {
                        let c = [self.wake.x[i], self.wake.y[i]];
                        el.push(c, self.wake.gamma[i], 0.0, self.delta_sq);
                    }
                }
                fast::BlobGroup::new(el)
            })
            .collect();
        // Far from a foil (its whole expansion) or from a group (its moments), their velocity
        // enters the tree's local expansions: bit `bi` of a particle's mask is foil `bi`, bit
        // `nb + bi` group `bi`, set where the tree left it out and it is added here.
        // Which particles are evaluated this step: all of them on a full step (every
        // `far_refresh` steps), otherwise those within REFRESH_CLEAR_CHORDS of a foil's chord
        // line, the chained and the new ones.
        let n = self.steps;
        let full = self.far_refresh <= 1 || n.is_multiple_of(self.far_refresh);
        let evaluate: Vec<bool> = if full {
            vec![true; np]
        } else {
            let clear = REFRESH_CLEAR_CHORDS * self.largest_chord();
            // Each chord line with the box (lowest, highest corner) that holds every point
            // within `clear` of it.
            let zones: Vec<(Segment, Segment)> = self
                .chord_lines(t)
                .into_iter()
                .map(|(a, b)| ((a, b), bounding_box(&[a, b], clear)))
                .collect();
            (0..np)
                .map(|i| {
                    let p = [self.wake.x[i], self.wake.y[i]];
                    i >= new_from
                        || in_chain[i]
                        || zones.iter().any(|&((a, b), (lo, hi))| {
                            p[0] >= lo[0]
                                && p[0] <= hi[0]
                                && p[1] >= lo[1]
                                && p[1] <= hi[1]
                                && geometry::segment_distance(a, b, p) < clear
                        })
                })
                .collect()
        };
        let from_tree: Vec<([f64; 2], u32)> = if full {
            // Far from a foil (its whole expansion) or from a group (its moments), their
            // velocity enters the tree's local expansions: bit `bi` of a particle's mask is foil
            // `bi`, bit `nb + bi` group `bi`, set where the tree left it out and it is added
            // below.
            let order = tree.order();
            let moments: Vec<Vec<Complex<f64>>> = groups.iter().map(|g| g.moments(order)).collect();
            let mut far: Vec<fast::FarField> = expansions
                .iter()
                .map(|e| fast::FarField {
                    centre: e.whole.centre,
                    radius: e.whole.radius,
                    clearance: e.whole.clearance,
                    moments: &e.whole.moments,
                })
                .collect();
            far.extend(
                groups
                    .iter()
                    .zip(&moments)
                    .map(|(g, m)| g.far_field(m, TREE_TOLERANCE)),
            );
            let (at_free, masks) = tree.velocity_at_elements_with(&far);
            let mut at_free = at_free.into_iter().zip(masks);
            (0..np)
                .map(|i| {
                    if i < new_from && !in_chain[i] {
                        at_free.next().expect("one tree element per free particle")
                    } else {
                        (tree.velocity([self.wake.x[i], self.wake.y[i]]), u32::MAX)
                    }
                })
                .collect()
        } else {
            // The near wake through target leaves of its own; every far field added directly.
            let near: Vec<usize> = (0..np).filter(|&i| evaluate[i]).collect();
            let pts: Vec<[f64; 2]> = near
                .iter()
                .map(|&i| [self.wake.x[i], self.wake.y[i]])
                .collect();
            let mut out = vec![([0.0; 2], 0u32); np];
            for (&i, (u, _)) in near.iter().zip(tree.eval_points(&pts, false)) {
                out[i] = (u, u32::MAX);
            }
            out
        };
        let vel: Vec<[f64; 2]> = par_map(np, PARALLEL_PARTICLES, |i| {
            if !evaluate[i] {
                return [0.0; 2];
            }
            let p = [self.wake.x[i], self.wake.y[i]];
            let (mut u, missed) = from_tree[i];
            for (gi, g) in groups.iter().enumerate() {
                if missed & (1 << (nb + gi)) != 0 && !g.is_empty() {
                    let v = g.velocity(p);
                    u[0] += v[0];
                    u[1] += v[1];
                }
            }
            u[0] += self.speed;
            for (bi, (b, e)) in self.bodies.iter().zip(&expansions).enumerate() {
                if missed & (1 << bi) != 0 {
                    let v = self.body_velocity(b, e, p);
                    u[0] += v[0];
                    u[1] += v[1];
                }
            }
            u
        });
        // Adams-Bashforth 2 (Euler for a new particle), with the step since the particle's last
        // evaluation; a particle not evaluated this step moves with its velocity extrapolated
        // linearly from its last two evaluations to the middle of the step (second order too).
        let w = &mut self.wake;
        for i in 0..np {
            let step = if evaluate[i] {
                let u = vel[i];
                let up = w.u_prev[i];
                let gap = n - w.evaluated[i];
                let step = if up[0].is_nan() {
                    w.du[i] = [0.0; 2];
                    u
                } else if gap <= 1 {
                    w.du[i] = [u[0] - up[0], u[1] - up[1]];
                    [1.5 * u[0] - 0.5 * up[0], 1.5 * u[1] - 0.5 * up[1]]
                } else {
                    let g = gap as f64;
                    let du = [(u[0] - up[0]) / g, (u[1] - up[1]) / g];
                    w.du[i] = du;
                    [u[0] + 0.5 * du[0], u[1] + 0.5 * du[1]]
                };
                w.u_prev[i] = u;
                w.evaluated[i] = n;
                step
            } else {
                w.extrapolated(i, (n - w.evaluated[i]) as f64 + 0.5)
            };
            w.x[i] += self.dt * step[0];
            w.y[i] += self.dt * step[1];
        }
        let t_next = t + self.dt;
        let margin = 0.25 * self.delta_sq.sqrt();
        for b in &self.bodies {
            let pose = b.motion.pose(t_next);
            let outline = b.outline_at(&pose);
            let (lo, hi) = bounding_box(&outline, margin);
            for i in 0..np {
                let p = [self.wake.x[i], self.wake.y[i]];
                if p[0] < lo[0] || p[0] > hi[0] || p[1] < lo[1] || p[1] > hi[1] {
                    continue;
                }
                let inside = geometry::inside_polygon(&outline, p);
                let (qp, edge, dist) = geometry::nearest_on_polygon(&outline, p);
                if inside || dist < margin {
                    let (a, bb) = (outline[edge], outline[edge + 1]);
                    let d = [bb[0] - a[0], bb[1] - a[1]];
                    let l = (d[0] * d[0] + d[1] * d[1]).sqrt();
                    let nrm = [-d[1] / l, d[0] / l];
                    self.wake.x[i] = qp[0] + margin * nrm[0];
                    self.wake.y[i] = qp[1] + margin * nrm[1];
                }
            }
        }
    }
}

fn bounding_box(pts: &[[f64; 2]], margin: f64) -> ([f64; 2], [f64; 2]) {
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for p in pts {
        lo = [smaller(lo[0], p[0]), smaller(lo[1], p[1])];
        hi = [larger(hi[0], p[0]), larger(hi[1], p[1])];
    }
    (
        [lo[0] - margin, lo[1] - margin],
        [hi[0] + margin, hi[1] + margin],
    )
}

/// Derivative along the surface of values at collocation points, second-order on the non-uniform
/// arc-length grid; one-sided at the two trailing-edge panels (the potential jumps across the TE).
fn surface_derivative(f: &[f64], s: &[f64]) -> Vec<f64> {
    let n = f.len();
    let mut d = vec![0.0; n];
    for j in 1..n - 1 {
        let h1 = s[j] - s[j - 1];
        let h2 = s[j + 1] - s[j];
        d[j] = -h2 / (h1 * (h1 + h2)) * f[j - 1]
            + (h2 - h1) / (h1 * h2) * f[j]
            + h1 / (h2 * (h1 + h2)) * f[j + 1];
    }
    let (h1, h2) = (s[1] - s[0], s[2] - s[1]);
    d[0] = -(2.0 * h1 + h2) / (h1 * (h1 + h2)) * f[0] + (h1 + h2) / (h1 * h2) * f[1]
        - h1 / (h2 * (h1 + h2)) * f[2];
    let (h1, h2) = (s[n - 2] - s[n - 3], s[n - 1] - s[n - 2]);
    d[n - 1] = h2 / (h1 * (h1 + h2)) * f[n - 3] - (h1 + h2) / (h1 * h2) * f[n - 2]
        + (2.0 * h2 + h1) / (h2 * (h1 + h2)) * f[n - 1];
    d
}

/// Checks that no two foils come closer than a thousandth of the smaller chord at any of 256
/// instants over a cycle (and during the smooth start).
fn check_clearance(case: &Case, bodies: &[Body]) -> Result<(), CaseError> {
    if bodies.len() < 2 {
        return Ok(());
    }
    let period = if case.frequency > 0.0 {
        1.0 / case.frequency
    } else {
        0.0
    };
    let ramp = bodies[0].motion.ramp_time;
    let samples = if period > 0.0 { 256 } else { 1 };
    let mut times: Vec<f64> = (0..samples)
        .map(|i| ramp + period * i as f64 / samples as f64)
        .collect();
    if ramp > 0.0 {
        times.extend((0..64).map(|i| ramp * i as f64 / 64.0));
    }
    for i in 0..bodies.len() {
        for j in i + 1..bodies.len() {
            let (bi, bj) = (&bodies[i], &bodies[j]);
            let limit = 1e-3 * bi.chord.min(bj.chord);
            for &t in &times {
                let (pi, pj) = (bi.motion.pose(t), bj.motion.pose(t));
                let reach = bi.chord + bj.chord;
                let dx = pi.pivot[0] - pj.pivot[0];
                let dy = pi.pivot[1] - pj.pivot[1];
                if dx * dx + dy * dy > reach * reach {
                    continue;
                }
                let d = geometry::polygon_distance(&bi.outline_at(&pi), &bj.outline_at(&pj));
                if d <= limit {
                    return Err(CaseError::new(
                        format!("foils.{j}"),
                        format!("x = {} m, y = {} m", case.foils[j].x, case.foils[j].y),
                        format!("positions where foils {i} and {j} stay at least {limit:.2e} m apart at every instant"),
                        format!(
                            "foils {i} and {j} {} at t = {t:.4} s; move foil {j} further away (foils.{j}.x or foils.{j}.y) or reduce the heave and pitch amplitudes",
                            if d == 0.0 { "overlap" } else { "touch" }
                        ),
                    )
                    .with_kind(crate::error::ErrorKind::Overlap));
                }
            }
        }
    }
    Ok(())
}

/// Result of a steady solution on an arbitrary closed section.
#[derive(Debug, Clone)]
pub struct SteadySolution {
    /// m. Collocation points (panel midpoints).
    pub points: Vec<[f64; 2]>,
    /// Pressure coefficient at each collocation point.
    pub cp: Vec<f64>,
    /// Lift coefficient from integrated pressure (per unit chord `chord`).
    pub lift_coefficient: f64,
    /// Lift coefficient from the Kutta-Joukowski theorem, `-2 Gamma / (U c)`.
    pub lift_coefficient_circulation: f64,
}

/// Steady flow at speed 1 and angle of attack `alpha` (rad) about the closed section `nodes`
/// (clockwise from the trailing edge, first = last, metres), with chord `chord` for the
/// coefficients. The wake is a straight doublet panel along the free stream, 10^5 chords long.
/// This is the same panel discretisation the time-stepping solver uses.
pub fn steady_solution(nodes: &[[f64; 2]], chord: f64, alpha: f64) -> SteadySolution {
    let motion = Motion {
        omega: 0.0,
        heave: 0.0,
        pitch: 0.0,
        pitch_mean: 0.0,
        pitch_lead: 0.0,
        phase: 0.0,
        pivot_mean: [0.0, 0.0],
        ramp_time: 0.0,
    };
    // Nodes are given in metres; a chord of 1 with the pivot at 0 keeps them as they are.
    let mut b = new_body_from_section(nodes.to_vec(), 1.0, 1.0, 0.0, motion);
    let n = b.panels();
    let u_inf = [alpha.dcos(), alpha.dsin()];
    for j in 0..n {
        b.sigma[j] = -(b.normals[j][0] * u_inf[0] + b.normals[j][1] * u_inf[1]);
    }
    let te = b.trailing_edge();
    let far = [
        te[0] + 1e5 * chord * u_inf[0],
        te[1] + 1e5 * chord * u_inf[1],
    ];
    let mut a = b.self_doublet.clone();
    let mut rhs = DVector::<f64>::zeros(n);
    for j in 0..n {
        let mut s = 0.0;
        for k in 0..n {
            s += b.self_source[(j, k)] * b.sigma[k];
        }
        rhs[j] = -s;
        let w = kernels::doublet_potential(te, far, b.mids[j]);
        a[(j, n - 1)] += w;
        a[(j, 0)] -= w;
    }
    let mu = a
        .lu()
        .solve(&rhs)
        .expect("steady panel system is non-singular");
    let muv: Vec<f64> = mu.iter().copied().collect();
    let dmu = surface_derivative(&muv, &b.arc);
    let mut cp = vec![0.0; n];
    let (mut fx, mut fy) = (0.0, 0.0);
    for j in 0..n {
        let t = b.tangents[j];
        let qt = u_inf[0] * t[0] + u_inf[1] * t[1] + dmu[j];
        cp[j] = 1.0 - qt * qt;
        fx -= cp[j] * b.normals[j][0] * b.lengths[j];
        fy -= cp[j] * b.normals[j][1] * b.lengths[j];
    }
    let lift = (-fx * u_inf[1] + fy * u_inf[0]) / chord;
    let gamma = muv[0] - muv[n - 1];
    SteadySolution {
        points: b.mids.clone(),
        cp,
        lift_coefficient: lift,
        lift_coefficient_circulation: -2.0 * gamma / chord,
    }
}

/// Motions of the foils of `case` (for kinematic statistics).
pub(crate) fn case_motions(sim: &Simulation) -> Vec<(Motion, f64, f64)> {
    sim.bodies
        .iter()
        .map(|b| (b.motion, b.chord, b.pivot))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Total circulation and first moment `sum Gamma (x, y)` of a wake.
    fn moments(w: &Wake) -> (f64, f64, f64) {
        let mut m = (0.0, 0.0, 0.0);
        for i in 0..w.len() {
            m.0 += w.gamma[i];
            m.1 += w.gamma[i] * w.x[i];
            m.2 += w.gamma[i] * w.y[i];
        }
        m
    }

    #[test]
    fn merging_combines_velocities_at_the_later_evaluation() {
        // Particle 0 evaluated at step 10 (2 m/s along x, growing 0.1 m/s a step), particle 1
        // at step 12 (1 m/s, steady): merged, particle 0's velocity is first carried to step 12
        // (2.2 m/s), then weighted by circulation (3 : 1).
        let mut w = Wake::default();
        w.push([0.0, 0.0], 3.0, 0, 10);
        w.push([0.1, 0.0], 1.0, 0, 12);
        w.u_prev = vec![[2.0, 0.0], [1.0, 0.0]];
        w.du = vec![[0.1, 0.0], [0.0, 0.0]];
        w.merge_into(0, 1);
        assert_eq!(w.evaluated[0], 12);
        assert!((w.u_prev[0][0] - (3.0 * 2.2 + 1.0) / 4.0).abs() < 1e-15);
        assert!((w.du[0][0] - 0.3 / 4.0).abs() < 1e-15);
        assert!((w.x[0] - 0.025).abs() < 1e-15 && w.gamma[0] == 4.0);
    }

    #[test]
    fn merging_by_distance_keeps_circulation_and_its_first_moment() {
        // Two foils' wakes interleaved as they are shed, runs of 7 same-sign particles, spread
        // along x from 0 to 3 m; merging allowed beyond x = 1 m with spacing 0.1 x.
        let mut w = Wake::default();
        for k in 0..300 {
            let x = 0.01 * k as f64;
            let sign = if (k / 7) % 2 == 0 { 1.0 } else { -1.0 };
            w.push(
                [x, 0.02 * (x * 5.0).sin()],
                sign * (1.0 + 0.001 * k as f64),
                0,
                0,
            );
            w.push([x, -0.3], -sign * 0.5, 1, 0);
        }
        let before = moments(&w);
        let n0 = w.len();
        let near: Vec<(f64, f64, f64)> = (0..n0)
            .filter(|&i| w.x[i] < 1.0)
            .map(|i| (w.x[i], w.y[i], w.gamma[i]))
            .collect();
        let mut removed = 0;
        for _ in 0..10 {
            removed += w.merge_by_distance(2, |p| if p[0] < 1.0 { 0.0 } else { 0.1 * p[0] });
        }
        let after = moments(&w);
        assert_eq!(w.len(), n0 - removed);
        assert!(removed > n0 / 3, "only {removed} of {n0} merged");
        // Round-off of a few hundred additions.
        assert!((after.0 - before.0).abs() < 1e-12 * before.0.abs().max(1.0));
        assert!((after.1 - before.1).abs() < 1e-12 * before.1.abs().max(1.0));
        assert!((after.2 - before.2).abs() < 1e-12 * before.2.abs().max(1.0));
        // Particles inside the clear zone are untouched, in order.
        let kept: Vec<(f64, f64, f64)> = (0..w.len())
            .filter(|&i| w.x[i] < 1.0)
            .map(|i| (w.x[i], w.y[i], w.gamma[i]))
            .collect();
        assert_eq!(kept, near);
        // Merged particles never mix signs or foils: each foil's circulation is kept.
        for foil in 0..2 {
            let g: f64 = (0..w.len())
                .filter(|&i| w.owner[i] == foil)
                .map(|i| w.gamma[i])
                .sum();
            let expected: f64 = (0..300)
                .map(|k| {
                    let sign = if (k / 7) % 2 == 0 { 1.0 } else { -1.0 };
                    if foil == 0 {
                        sign * (1.0 + 0.001 * k as f64)
                    } else {
                        -sign * 0.5
                    }
                })
                .sum();
            assert!(
                (g - expected).abs() < 1e-12 * 300.0,
                "foil {foil}: {g} vs {expected}"
            );
        }
    }
}
