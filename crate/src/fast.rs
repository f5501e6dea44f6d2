//! Fast summation of the velocity and stream function of many vortex blobs and point sources:
//! a tree code with complex multipole expansions (Barnes & Hut 1986 for the tree; the 2D
//! complex-variable expansions of Greengard & Rokhlin 1987), accurate to a chosen tolerance.
//!
//! Elements are Gaussian vortex blobs (counter-clockwise circulation `gamma`, core `delta`, with
//! velocity `gamma / (2 pi r^2) (1 - exp(-r^2 / delta^2))` around the centre; Gaussian cores
//! are the Lamb-Oseen profile, see Leonard 1980, J. Comput. Phys. 37) and point sources. Beyond a
//! few cores a Gaussian blob is a point vortex to round-off, so a far cell acts through the
//! multipole expansion `w(z) = sum_n a_n / (z - c)^(n + 1)` of the complex velocity
//! `w = u - i v`, with `a_n = sum_k s_k (z_k - c)^n` and `s_k = (q_k - i gamma_k) / (2 pi)`.
//! Near cells are summed directly with the exact kernels.
//!
//! The expansion error of a cell of radius `R` seen from distance `d` is below `(R / d)^(p + 1)`
//! relative, so with the opening ratio `theta` the order is `p = ln(tol) / ln(theta)`.
//! Data is stored as structures of arrays so the direct loops vectorise.

use crate::detmath::{larger, smaller, DetMath};
use nalgebra::Complex;
use std::f64::consts::PI;
use std::sync::{Arc, Mutex};

type C64 = Complex<f64>;

/// Distance in cores beyond which a Gaussian blob acts as a point vortex to relative accuracy
/// `tolerance`: its velocity differs by the factor `exp(-r^2 / delta^2)` and its stream function
/// by `E1(r^2 / delta^2) < exp(-r^2 / delta^2)`, so the cut is `sqrt(ln(1 / tolerance))`
/// (3.7 cores for 1e-6). A far cell's blobs must all be that far from the point (or leaf).
pub fn point_vortex_cut(tolerance: f64) -> f64 {
    (-tolerance.dln()).sqrt()
}

/// Elements per leaf cell (16: fewest operations for the default case, by instruction count).
const LEAF: usize = 16;
const _: () = assert!(
    LEAF.is_multiple_of(LANES),
    "mutual_block pads leaves to whole blocks"
);
/// Points per leaf of the target tree of [`Tree::eval_points`].
const TARGET_LEAF: usize = 16;

/// Target leaves below which a tree evaluation runs on one thread (about a thousand points;
/// see `sim::par_map`).
const PARALLEL_LEAVES: usize = 64;
/// Beyond this `r^2 / delta^2`, `E1` (below `exp(-x) / x = 1e-19`) is negligible beside `ln r^2`.
const E1_NEGLIGIBLE: f64 = 40.0;
/// Parts of the near sums of [`Tree::velocity_at_elements`] for trees of at least
/// [`PARALLEL_LEAVES`] leaves (fixed, so that results do not depend on the number of threads).
const NEAR_PARTS: usize = 4;
/// Euler-Mascheroni constant.
const EULER_GAMMA: f64 = 0.577_215_664_901_532_9;

/// Exponential integral `E1(x)` for `x > 0` (series below 1, continued fraction above;
/// Abramowitz & Stegun 1964, 5.1.11 and 5.1.22), to about 1e-15 relative.
pub fn exp_integral_e1(x: f64) -> f64 {
    if x <= 1.0 {
        -EULER_GAMMA - x.dln() + e1_series_tail(x)
    } else if x > 700.0 {
        0.0
    } else {
        // Modified Lentz evaluation of the continued fraction.
        let tiny = 1e-300;
        let mut b = x + 1.0;
        let mut c = 1.0 / tiny;
        let mut d = 1.0 / b;
        let mut h = d;
        for i in 1..200 {
            let an = -((i * i) as f64);
            b += 2.0;
            d = 1.0 / (an * d + b);
            c = b + an / c;
            let del = c * d;
            h *= del;
            if (del - 1.0).abs() < 1e-16 {
                break;
            }
        }
        h * (-x).dexp()
    }
}

/// `sum_{k >= 1} (-1)^(k+1) x^k / (k k!)`, so that `E1(x) = -gamma - ln x + tail` for `x <= 1`.
fn e1_series_tail(x: f64) -> f64 {
    let mut term = 1.0;
    let mut sum = 0.0;
    for k in 1..40 {
        term *= -x / k as f64;
        let t = -term / k as f64;
        sum += t;
        if t.abs() < 1e-18 {
            break;
        }
    }
    sum
}

/// Order of the multipole expansion needed at radius-over-distance `ratio` for relative
/// tolerance `tolerance`: the smallest `p >= 1` with `ratio^p <= tolerance` (the truncation
/// error after order `p` is below `ratio^(p + 1)`), at most `max`.
#[inline]
pub fn terms_needed(ratio: f64, tolerance: f64, max: usize) -> usize {
    let mut p = 1;
    let mut bound = ratio;
    while bound > tolerance && p < max {
        bound *= ratio;
        p += 1;
    }
    p
}

/// `sum_m a[m] t^m` by Horner's rule in `t^2` on the even and odd terms separately (two
/// independent chains, half the latency of one).
#[inline]
pub fn horner2(a: &[C64], t: C64) -> C64 {
    let t2 = t * t;
    let (mut even, mut odd) = (C64::new(0.0, 0.0), C64::new(0.0, 0.0));
    for (k, ak) in a.iter().enumerate().rev() {
        if k & 1 == 0 {
            even = even * t2 + ak;
        } else {
            odd = odd * t2 + ak;
        }
    }
    even + odd * t
}

/// Velocity at `p` of a Gaussian vortex blob (circulation `gamma` at `c`, squared core
/// `delta_sq`; 0 gives a point vortex). Zero at the centre.
#[inline]
pub fn gaussian_velocity(c: [f64; 2], gamma: f64, delta_sq: f64, p: [f64; 2]) -> [f64; 2] {
    let dx = p[0] - c[0];
    let dy = p[1] - c[1];
    let r2 = dx * dx + dy * dy;
    if r2 == 0.0 {
        return [0.0, 0.0];
    }
    let shield = if delta_sq > 0.0 {
        1.0 - (-r2 / delta_sq).dexp()
    } else {
        1.0
    };
    let f = gamma * shield / (2.0 * PI * r2);
    [-f * dy, f * dx]
}

/// Stream function at `p` of a Gaussian vortex blob: `-(gamma / 4 pi) (ln r^2 + E1(r^2 / delta^2))`,
/// whose velocity is [`gaussian_velocity`]; finite at the centre.
#[inline]
pub fn gaussian_stream_function(c: [f64; 2], gamma: f64, delta_sq: f64, p: [f64; 2]) -> f64 {
    let dx = p[0] - c[0];
    let dy = p[1] - c[1];
    let r2 = dx * dx + dy * dy;
    let k = -gamma / (4.0 * PI);
    if delta_sq <= 0.0 {
        return k * r2.dln();
    }
    let x = r2 / delta_sq;
    if x <= 1.0 {
        // ln r^2 + E1(x) = ln delta^2 - gamma_E + tail(x): no cancellation near the centre.
        k * (delta_sq.dln() - EULER_GAMMA + e1_series_tail(x))
    } else if x > E1_NEGLIGIBLE {
        k * r2.dln()
    } else {
        k * (r2.dln() + exp_integral_e1(x))
    }
}

/// Elements to sum: positions (m), circulation (m^2/s), source strength (m^2/s) and squared core
/// (m^2) of each.
#[derive(Debug, Clone, Default)]
pub struct Elements {
    /// m. x of each element.
    pub x: Vec<f64>,
    /// m. y of each element.
    pub y: Vec<f64>,
    /// m^2/s. Circulation, counter-clockwise positive.
    pub gamma: Vec<f64>,
    /// m^2/s. Point-source strength (volume flux per unit span).
    pub source: Vec<f64>,
    /// m^2. Squared Gaussian core radius of the vortex part (sources are points).
    pub delta_sq: Vec<f64>,
}

impl Elements {
    /// Adds one element.
    pub fn push(&mut self, p: [f64; 2], gamma: f64, source: f64, delta_sq: f64) {
        self.x.push(p[0]);
        self.y.push(p[1]);
        self.gamma.push(gamma);
        self.source.push(source);
        self.delta_sq.push(delta_sq);
    }

    /// Number of elements.
    pub fn len(&self) -> usize {
        self.x.len()
    }

    /// True when there are no elements.
    pub fn is_empty(&self) -> bool {
        self.x.is_empty()
    }

    /// m/s. Direct sum of the velocity at `p` (the blocked kernel of the tree's near field).
    pub fn velocity(&self, p: [f64; 2]) -> [f64; 2] {
        velocity_range::<true, true>(self.columns(), 0, self.len(), p)
    }

    /// m/s and m^2/s. Direct sum of velocity and stream function at `p` (the reference).
    pub fn direct(&self, p: [f64; 2]) -> ([f64; 2], f64) {
        direct_range::<true, true>(self.columns(), 0, self.len(), p, true)
    }

    fn columns(&self) -> Columns<'_> {
        Columns {
            x: &self.x,
            y: &self.y,
            gamma: &self.gamma,
            source: &self.source,
            delta_sq: &self.delta_sq,
        }
    }
}

/// A few elements summed directly, with their enclosing circle and largest core: at a point six
/// cores or more clear of the circle the blob shield is exactly 1 (see [`velocity_range`]), so
/// [`BlobGroup::velocity`] skips it there with the same result as [`Elements::velocity`].
#[derive(Debug, Clone, Default)]
pub struct BlobGroup {
    elements: Elements,
    /// m. Centre of the enclosing circle.
    centre: [f64; 2],
    /// m. Radius of the enclosing circle.
    radius: f64,
    /// m. Largest core.
    core: f64,
    /// True when some element has a source strength.
    sources: bool,
}

impl BlobGroup {
    /// Groups `elements`.
    pub fn new(elements: Elements) -> BlobGroup {
        let pts: Vec<[f64; 2]> = elements
            .x
            .iter()
            .zip(&elements.y)
            .map(|(&x, &y)| [x, y])
            .collect();
        let (centre, radius) = span(&pts);
        let core = elements.delta_sq.iter().copied().fold(0.0, larger).sqrt();
        let sources = elements.source.iter().any(|&q| q != 0.0);
        BlobGroup {
            elements,
            centre,
            radius,
            core,
            sources,
        }
    }

    /// True when the group holds no element.
    pub fn is_empty(&self) -> bool {
        self.elements.is_empty()
    }

    /// The group's multipole moments `a_0 ..= a_order` about the centre of its enclosing circle,
    /// in the convention of [`FarField`].
    pub fn moments(&self, order: usize) -> Vec<C64> {
        let mut a = vec![C64::new(0.0, 0.0); order + 1];
        add_moments(
            self.elements.columns(),
            0,
            self.elements.len(),
            self.centre,
            &mut a,
        );
        a
    }

    /// The group as a [`FarField`] of the moments `moments` (from [`BlobGroup::moments`]) for
    /// relative tolerance `tolerance`: its blobs act as point vortices from the point-vortex
    /// cut of the largest core. (An empty group has no enclosing circle; its far field, zero,
    /// is put at the origin.)
    pub fn far_field<'a>(&self, moments: &'a [C64], tolerance: f64) -> FarField<'a> {
        FarField {
            centre: if self.is_empty() {
                [0.0, 0.0]
            } else {
                self.centre
            },
            radius: self.radius,
            clearance: point_vortex_cut(tolerance) * self.core,
            moments,
        }
    }

    /// m/s. Direct sum of the velocity at `p` (as [`Elements::velocity`]).
    pub fn velocity(&self, p: [f64; 2]) -> [f64; 2] {
        let el = &self.elements;
        if el.is_empty() {
            return [0.0, 0.0];
        }
        let gap = ((p[0] - self.centre[0]).powi(2) + (p[1] - self.centre[1]).powi(2)).sqrt()
            - self.radius;
        let c = el.columns();
        match (self.sources, gap <= SHIELD_CUT * self.core) {
            (true, true) => velocity_range::<true, true>(c, 0, el.len(), p),
            (true, false) => velocity_range::<true, false>(c, 0, el.len(), p),
            (false, true) => velocity_range::<false, true>(c, 0, el.len(), p),
            (false, false) => velocity_range::<false, false>(c, 0, el.len(), p),
        }
    }
}

/// The columns of a set of elements, borrowed (see [`Elements`] for units).
#[derive(Clone, Copy)]
struct Columns<'a> {
    x: &'a [f64],
    y: &'a [f64],
    gamma: &'a [f64],
    source: &'a [f64],
    delta_sq: &'a [f64],
}

/// Independent accumulators of the direct sums: the loop over elements runs `LANES` at a time
/// with no branches, which the compiler turns into SIMD instructions (two f64 lanes with SSE2
/// natively, simd128 on wasm32). Element `k` of a range always adds into lane `(k - lo) %
/// LANES` and the lanes are summed in a fixed order, so every target gives the same bits.
const LANES: usize = 4;

/// `1 / i!` for `i = 0..=13`, computed at compile time by repeated division (each step rounds
/// once, so entry `i` is within `i` units in the last place; the unit test on
/// [`exp_nonpositive`] bounds the effect on the sum).
const INV_FACTORIAL: [f64; 14] = {
    let mut t = [1.0; 14];
    let mut i = 1;
    while i < 14 {
        t[i] = t[i - 1] / i as f64;
        i += 1;
    }
    t
};

/// musl's split of ln 2 for [`exp_nonpositive`]: the high part has 32 trailing zero bits, so
/// `k * LN2_HI` is exact.
const LN2_HI: f64 = f64::from_bits(0x3fe6_2e42_fee0_0000);
const LN2_LO: f64 = f64::from_bits(0x3dea_39ef_3579_3c76);
/// 1.5 * 2^52: adding it rounds to an integer, which then sits in the low mantissa bits.
const SHIFT: f64 = 6_755_399_441_055_744.0;

/// Cores (`r / delta`) from which the blob shield `1 - exp(-r^2 / delta^2)` is taken as exactly 1
/// (six cores: `exp(-36)` is below the round-off of 1).
const SHIELD_CUT: f64 = 6.0;
/// [`SHIELD_CUT`] squared, the same cut on `r^2 / delta^2`.
const SHIELD_CUT_SQ: f64 = SHIELD_CUT * SHIELD_CUT;

/// `exp(x)` for `-40 <= x <= 0` in basic IEEE operations only (no table, no branch), so that it
/// vectorises and rounds the same on every target: `x = k ln 2 + r` with `|r| <= ln 2 / 2`
/// (Cody & Waite 1980 reduction, `ln 2` split as in musl's `exp`), `exp(r)` by its Taylor
/// series to `r^13` (truncation below `0.35^14 / 14! = 4e-18`), and `2^k` written into the
/// exponent bits. Within a few units in the last place of `libm::exp` (unit test).
#[inline(always)]
fn exp_nonpositive(x: f64) -> f64 {
    let t = x * std::f64::consts::LOG2_E + SHIFT;
    let k = t - SHIFT;
    let r = (x - k * LN2_HI) - k * LN2_LO;
    // Horner's rule on the coefficients 1 / i!, highest first: one multiply and one add a term.
    let mut e = INV_FACTORIAL[13];
    let mut i = 12;
    while i > 0 {
        e = INV_FACTORIAL[i] + r * e;
        i -= 1;
    }
    e = 1.0 + r * e;
    // Low bits of t are k + 1023 after the add (k >= -58 here); shifting by 52 leaves only them.
    let scale = f64::from_bits(t.to_bits().wrapping_add(1023) << 52);
    e * scale
}

/// m/s. Velocity at `p` of elements `lo..hi` (blobs, and point sources when `SRC`), summed in
/// [`LANES`] lanes: the same kernel as [`gaussian_velocity`] (zero at an element's own centre;
/// the shield `1 - exp(-r^2 / delta^2)` is 1 beyond six cores, where `exp(-36)` is below
/// round-off). Without `SHIELD` every element is taken to be beyond six cores of `p`.
#[inline]
fn velocity_range<const SRC: bool, const SHIELD: bool>(
    c: Columns,
    lo: usize,
    hi: usize,
    p: [f64; 2],
) -> [f64; 2] {
    let (xs, ys, gs, qs, d2s) = (c.x, c.y, c.gamma, c.source, c.delta_sq);
    let mut au = [0.0; LANES];
    let mut av = [0.0; LANES];
    #[inline(always)]
    fn one<const SRC: bool, const SHIELD: bool>(
        x: f64,
        y: f64,
        g: f64,
        q: f64,
        d2: f64,
        p: [f64; 2],
    ) -> (f64, f64) {
        let dx = p[0] - x;
        let dy = p[1] - y;
        let r2 = dx * dx + dy * dy;
        let inv = if r2 > 0.0 { 1.0 / (2.0 * PI * r2) } else { 0.0 };
        let fg = if SHIELD {
            let inside = r2 < SHIELD_CUT_SQ * d2;
            let arg = if inside { -r2 / d2 } else { -SHIELD_CUT_SQ };
            let e = exp_nonpositive(arg);
            let shield = if inside { 1.0 - e } else { 1.0 };
            g * shield * inv
        } else {
            g * inv
        };
        if SRC {
            let fq = q * inv;
            (-fg * dy + fq * dx, fg * dx + fq * dy)
        } else {
            (-fg * dy, fg * dx)
        }
    }
    let blocks = (hi - lo) / LANES;
    for b in 0..blocks {
        let k = lo + b * LANES;
        let (x, y, g, d2) = (
            &xs[k..k + LANES],
            &ys[k..k + LANES],
            &gs[k..k + LANES],
            &d2s[k..k + LANES],
        );
        let q = &qs[k..k + LANES];
        for j in 0..LANES {
            let (du, dv) = one::<SRC, SHIELD>(x[j], y[j], g[j], q[j], d2[j], p);
            au[j] += du;
            av[j] += dv;
        }
    }
    for (j, k) in (lo + blocks * LANES..hi).enumerate() {
        let (du, dv) = one::<SRC, SHIELD>(xs[k], ys[k], gs[k], qs[k], d2s[k], p);
        au[j] += du;
        av[j] += dv;
    }
    [
        (au[0] + au[1]) + (au[2] + au[3]),
        (av[0] + av[1]) + (av[2] + av[3]),
    ]
}

/// m/s. Adds to `u` and `v` (indexed like the columns) the velocities that the blobs of two
/// distinct leaves `a` and `b`, all of squared core `delta_sq` and without sources, induce on
/// each other: each pair's distance and kernel serve both, with opposite signs (the kernel of
/// [`velocity_range`]). For each blob of `a` the sum over `b` runs in [`LANES`] lanes, summed in
/// a fixed order; `b`'s sums are kept apart and added at the end. Without `SHIELD` every pair is
/// taken to be six cores or more apart.
fn mutual_block<const SHIELD: bool>(
    c: Columns,
    a: &Cell,
    b: &Cell,
    delta_sq: f64,
    u: &mut [f64],
    v: &mut [f64],
) {
    let (lo, hi) = (b.start, b.end);
    let nb = hi - lo;
    assert!(nb <= LEAF, "a leaf holds at most LEAF elements");
    // b's blobs in fixed-size arrays, padded to whole blocks of LANES with blobs of zero
    // strength at b's last blob (they add zeros to a's sums, and their own sums are dropped),
    // so that every block has known bounds and vectorises. A blob of b adds into lane
    // `k % LANES` as in `velocity_range`.
    let blocks = nb.div_ceil(LANES);
    let (mut xs, mut ys, mut gs) = ([0.0; LEAF], [0.0; LEAF], [0.0; LEAF]);
    xs[..nb].copy_from_slice(&c.x[lo..hi]);
    ys[..nb].copy_from_slice(&c.y[lo..hi]);
    gs[..nb].copy_from_slice(&c.gamma[lo..hi]);
    for k in nb..blocks * LANES {
        xs[k] = xs[nb - 1];
        ys[k] = ys[nb - 1];
    }
    let mut ub = [0.0; LEAF];
    let mut vb = [0.0; LEAF];
    // A blob of `a` farther than six cores from b's bounding circle is six cores from each of
    // b's blobs, where the shield is exactly 1, so its row needs no exponentials (the same bits;
    // the relative margin of 1e-9 keeps rows within rounding of the cut on the shielded path).
    // The same holds block by block, for the rows that come near b.
    let cut = SHIELD_CUT * (1.0 + 1e-9) * delta_sq.sqrt();
    let clear_sq = (cut + b.radius).powi(2);
    let mut block_clear = [([0.0; 2], 0.0); LEAF / LANES];
    if SHIELD {
        for (bl, bc) in block_clear.iter_mut().enumerate().take(blocks) {
            let k = bl * LANES;
            let pts: [[f64; 2]; LANES] = std::array::from_fn(|j| [xs[k + j], ys[k + j]]);
            let (centre, radius) = span(&pts);
            *bc = (centre, (cut + radius).powi(2));
        }
    }
    for ka in a.start..a.end {
        let (xa, ya, ga) = (c.x[ka], c.y[ka], c.gamma[ka]);
        let (ox, oy) = (xa - b.centre[0], ya - b.centre[1]);
        let blobs = (&xs, &ys, &gs);
        let (su, sv) = if SHIELD && ox * ox + oy * oy <= clear_sq {
            let near_block = |bl: usize| {
                let (centre, clear_sq) = block_clear[bl];
                let (dx, dy) = (xa - centre[0], ya - centre[1]);
                dx * dx + dy * dy <= clear_sq
            };
            block_row(
                (xa, ya, ga),
                blobs,
                blocks,
                delta_sq,
                near_block,
                &mut ub,
                &mut vb,
            )
        } else {
            let never = |_: usize| false;
            block_row(
                (xa, ya, ga),
                blobs,
                blocks,
                delta_sq,
                never,
                &mut ub,
                &mut vb,
            )
        };
        u[ka] += su;
        v[ka] += sv;
    }
    for j in 0..nb {
        u[lo + j] += ub[j];
        v[lo + j] += vb[j];
    }
}

/// m/s. One blob's row of [`mutual_block`]: the velocity that the first `blocks` blocks of
/// [`LANES`] padded blobs of b induce on blob a (summed over the lanes in a fixed order), and
/// the opposite added to b's sums `ub`, `vb`; the shield is computed in the blocks for which
/// `shielded(block)` holds (elsewhere every pair must be six cores or more apart).
#[inline(always)]
fn block_row(
    a: (f64, f64, f64),
    (xs, ys, gs): (&[f64; LEAF], &[f64; LEAF], &[f64; LEAF]),
    blocks: usize,
    delta_sq: f64,
    shielded: impl Fn(usize) -> bool,
    ub: &mut [f64; LEAF],
    vb: &mut [f64; LEAF],
) -> (f64, f64) {
    let mut au = [0.0; LANES];
    let mut av = [0.0; LANES];
    for bl in 0..blocks {
        let k = bl * LANES;
        let block = |col: &[f64; LEAF]| -> [f64; LANES] {
            col[k..k + LANES].try_into().expect("one block")
        };
        let b = (block(xs), block(ys), block(gs));
        let ubb: &mut [f64; LANES] = (&mut ub[k..k + LANES]).try_into().expect("one block");
        let vbb: &mut [f64; LANES] = (&mut vb[k..k + LANES]).try_into().expect("one block");
        if shielded(bl) {
            pair_block::<true>(a, b, delta_sq, (&mut au, &mut av), (ubb, vbb));
        } else {
            pair_block::<false>(a, b, delta_sq, (&mut au, &mut av), (ubb, vbb));
        }
    }
    (
        (au[0] + au[1]) + (au[2] + au[3]),
        (av[0] + av[1]) + (av[2] + av[3]),
    )
}

/// Adds one pair's kernel to both blobs: to the lane sums `au`, `av` of blob a at `(xa, ya)`
/// of circulation `ga` from blob b at `(xb, yb)` of circulation `gb`, and the opposite to b's
/// sums `ub`, `vb` (see [`pair_kernel`]).
// The wasm32 SIMD build uses `simd::pair_kernel` in `pair_block` instead.
#[cfg_attr(
    all(target_arch = "wasm32", target_feature = "simd128"),
    allow(dead_code)
)]
#[inline(always)]
#[allow(clippy::too_many_arguments)]
fn add_pair<const SHIELD: bool>(
    (xa, ya, ga): (f64, f64, f64),
    (xb, yb, gb): (f64, f64, f64),
    delta_sq: f64,
    au: &mut f64,
    av: &mut f64,
    ub: &mut f64,
    vb: &mut f64,
) {
    let (dx, dy) = (xa - xb, ya - yb);
    let f = pair_kernel::<SHIELD>(dx, dy, delta_sq);
    let fa = gb * f;
    *au += -fa * dy;
    *av += fa * dx;
    let fb = ga * f;
    *ub += fb * dy;
    *vb -= fb * dx;
}

/// s/m^2. The blob kernel of [`velocity_range`] for a pair at `(dx, dy)` of squared core `d2`:
/// the shield `1 - exp(-r^2 / d2)` (1 from six cores on, or everywhere without `SHIELD`) over
/// `2 pi r^2`, zero for coincident blobs.
// The wasm32 SIMD build uses `simd::pair_kernel` in `pair_block` instead.
#[cfg_attr(
    all(target_arch = "wasm32", target_feature = "simd128"),
    allow(dead_code)
)]
#[inline(always)]
fn pair_kernel<const SHIELD: bool>(dx: f64, dy: f64, d2: f64) -> f64 {
    let r2 = dx * dx + dy * dy;
    let inv = if r2 > 0.0 { 1.0 / (2.0 * PI * r2) } else { 0.0 };
    if SHIELD {
        let inside = r2 < SHIELD_CUT_SQ * d2;
        let arg = if inside { -r2 / d2 } else { -SHIELD_CUT_SQ };
        let e = exp_nonpositive(arg);
        (if inside { 1.0 - e } else { 1.0 }) * inv
    } else {
        inv
    }
}

/// m/s. Adds to `u` and `v` (indexed like the columns) the velocities that the blobs of the
/// leaf `a`, all of squared core `delta_sq` and without sources, induce on each other: each
/// pair once for both (see [`mutual_block`]). For blob `i` the sum over the blobs after it runs
/// in [`LANES`] lanes, summed in a fixed order; what the earlier blobs give it is kept apart
/// and added at the end.
fn mutual_self(c: Columns, a: &Cell, delta_sq: f64, u: &mut [f64], v: &mut [f64]) {
    let (lo, hi) = (a.start, a.end);
    let n = hi - lo;
    assert!(n <= LEAF, "a leaf holds at most LEAF elements");
    if n == 0 {
        return;
    }
    // The blobs in fixed-size arrays, padded by a block of blobs of zero strength at the last
    // blob, so that every row runs in whole blocks with known bounds and vectorises: a padded
    // lane adds a zero to blob i's sum (which leaves it as it was) and its own sums are dropped.
    const PADDED: usize = LEAF + LANES;
    let (mut xs, mut ys, mut gs) = ([0.0; PADDED], [0.0; PADDED], [0.0; PADDED]);
    xs[..n].copy_from_slice(&c.x[lo..hi]);
    ys[..n].copy_from_slice(&c.y[lo..hi]);
    gs[..n].copy_from_slice(&c.gamma[lo..hi]);
    for k in n..PADDED {
        xs[k] = xs[n - 1];
        ys[k] = ys[n - 1];
    }
    let mut ub = [0.0; PADDED];
    let mut vb = [0.0; PADDED];
    for i in 0..n {
        let mut au = [0.0; LANES];
        let mut av = [0.0; LANES];
        let first = i + 1;
        for bl in 0..(n - first).div_ceil(LANES) {
            let k = first + bl * LANES;
            let block = |col: &[f64; PADDED]| -> [f64; LANES] {
                col[k..k + LANES].try_into().expect("one block")
            };
            let ubb: &mut [f64; LANES] = (&mut ub[k..k + LANES]).try_into().expect("one block");
            let vbb: &mut [f64; LANES] = (&mut vb[k..k + LANES]).try_into().expect("one block");
            let a = (xs[i], ys[i], gs[i]);
            let b = (block(&xs), block(&ys), block(&gs));
            // A block whose blobs are all six cores or more from blob i needs no exponentials
            // (the shield is exactly 1 there, as in `pair_kernel`).
            let clear = (0..LANES).all(|j| {
                let (dx, dy) = (a.0 - b.0[j], a.1 - b.1[j]);
                dx * dx + dy * dy >= SHIELD_CUT_SQ * delta_sq
            });
            if clear {
                pair_block::<false>(a, b, delta_sq, (&mut au, &mut av), (ubb, vbb));
            } else {
                pair_block::<true>(a, b, delta_sq, (&mut au, &mut av), (ubb, vbb));
            }
        }
        ub[i] += (au[0] + au[1]) + (au[2] + au[3]);
        vb[i] += (av[0] + av[1]) + (av[2] + av[3]);
    }
    for j in 0..n {
        u[lo + j] += ub[j];
        v[lo + j] += vb[j];
    }
}

/// [`add_pair`] for blob a and each blob of a block of [`LANES`] (lane `j` of the sums takes
/// blob `j`). In wasm32 it is written out in 128-bit SIMD (the compiler leaves the scalar form
/// unvectorised there): the same IEEE operations in the same order on each lane, so the same
/// bits as the native build (`tests/wasm/parity.test.mjs`).
#[inline(always)]
fn pair_block<const SHIELD: bool>(
    a: (f64, f64, f64),
    (xb, yb, gb): ([f64; LANES], [f64; LANES], [f64; LANES]),
    delta_sq: f64,
    (au, av): (&mut [f64; LANES], &mut [f64; LANES]),
    (ub, vb): (&mut [f64; LANES], &mut [f64; LANES]),
) {
    #[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
    for j in 0..LANES {
        let b = (xb[j], yb[j], gb[j]);
        add_pair::<SHIELD>(
            a, b, delta_sq, &mut au[j], &mut av[j], &mut ub[j], &mut vb[j],
        );
    }
    #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
    {
        use core::arch::wasm32::*;
        let (xa, ya, ga) = (f64x2_splat(a.0), f64x2_splat(a.1), f64x2_splat(a.2));
        let d2 = f64x2_splat(delta_sq);
        for h in 0..LANES / 2 {
            let (i, j) = (2 * h, 2 * h + 1);
            let pair = |v: &[f64; LANES]| f64x2(v[i], v[j]);
            let dx = f64x2_sub(xa, pair(&xb));
            let dy = f64x2_sub(ya, pair(&yb));
            let f = simd::pair_kernel::<SHIELD>(dx, dy, d2);
            let fa = f64x2_mul(pair(&gb), f);
            let su = f64x2_add(pair(au), f64x2_mul(f64x2_neg(fa), dy));
            let sv = f64x2_add(pair(av), f64x2_mul(fa, dx));
            let fb = f64x2_mul(ga, f);
            let tu = f64x2_add(pair(ub), f64x2_mul(fb, dy));
            let tv = f64x2_sub(pair(vb), f64x2_mul(fb, dx));
            for (out, w) in [
                (&mut *au, su),
                (&mut *av, sv),
                (&mut *ub, tu),
                (&mut *vb, tv),
            ] {
                out[i] = f64x2_extract_lane::<0>(w);
                out[j] = f64x2_extract_lane::<1>(w);
            }
        }
    }
}

/// [`pair_kernel`] and [`exp_nonpositive`] on two lanes of wasm32 SIMD, operation for operation.
#[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
mod simd {
    use super::{INV_FACTORIAL, LN2_HI, LN2_LO, PI, SHIELD_CUT_SQ, SHIFT};
    use core::arch::wasm32::*;

    #[inline(always)]
    pub(super) fn pair_kernel<const SHIELD: bool>(dx: v128, dy: v128, d2: v128) -> v128 {
        let r2 = f64x2_add(f64x2_mul(dx, dx), f64x2_mul(dy, dy));
        let inv = f64x2_div(f64x2_splat(1.0), f64x2_mul(f64x2_splat(2.0 * PI), r2));
        let inv = v128_and(inv, f64x2_gt(r2, f64x2_splat(0.0)));
        if SHIELD {
            let inside = f64x2_lt(r2, f64x2_mul(f64x2_splat(SHIELD_CUT_SQ), d2));
            let cut = f64x2_splat(-SHIELD_CUT_SQ);
            let arg = v128_bitselect(f64x2_div(f64x2_neg(r2), d2), cut, inside);
            let e = exp_nonpositive(arg);
            let shield = v128_bitselect(f64x2_sub(f64x2_splat(1.0), e), f64x2_splat(1.0), inside);
            f64x2_mul(shield, inv)
        } else {
            inv
        }
    }

    #[inline(always)]
    fn exp_nonpositive(x: v128) -> v128 {
        let t = f64x2_add(
            f64x2_mul(x, f64x2_splat(std::f64::consts::LOG2_E)),
            f64x2_splat(SHIFT),
        );
        let k = f64x2_sub(t, f64x2_splat(SHIFT));
        let r = f64x2_sub(
            f64x2_sub(x, f64x2_mul(k, f64x2_splat(LN2_HI))),
            f64x2_mul(k, f64x2_splat(LN2_LO)),
        );
        let mut e = f64x2_splat(INV_FACTORIAL[13]);
        for c in INV_FACTORIAL[1..13].iter().rev() {
            e = f64x2_add(f64x2_splat(*c), f64x2_mul(r, e));
        }
        e = f64x2_add(f64x2_splat(1.0), f64x2_mul(r, e));
        let scale = i64x2_shl(i64x2_add(t, i64x2_splat(1023)), 52);
        f64x2_mul(e, scale)
    }
}

/// m/s and m^2/s. Velocity (see [`velocity_range`]) and, when `PSI`, stream function at `p` of
/// elements `lo..hi`; `shielded` false promises that all of them are six cores or more from `p`.
#[inline]
fn direct_range<const PSI: bool, const SRC: bool>(
    c: Columns,
    lo: usize,
    hi: usize,
    p: [f64; 2],
    shielded: bool,
) -> ([f64; 2], f64) {
    let w = if shielded {
        velocity_range::<SRC, true>(c, lo, hi, p)
    } else {
        velocity_range::<SRC, false>(c, lo, hi, p)
    };
    let mut psi = 0.0;
    if PSI {
        for k in lo..hi {
            if c.gamma[k] != 0.0 {
                let centre = [c.x[k], c.y[k]];
                psi += gaussian_stream_function(centre, c.gamma[k], c.delta_sq[k], p);
            }
        }
    }
    (w, psi)
}

/// Constants of the expansions of one order and tolerance, computed once per process and
/// shared by every tree that uses them (a tree is built each time step).
#[derive(Debug)]
struct Tables {
    /// `thresholds[k - 1]`: the largest radius-over-distance at which order `k` meets the
    /// tolerance (`tolerance^(1 / k)`, see [`terms_needed`]).
    thresholds: Vec<f64>,
    /// `1 / k` for k = 0..=order+1 (0 for k = 0).
    inverse: Vec<f64>,
    /// `C(n + l - 1, l)` at `[n * (order + 2) + l]` for l = 0..=order+1, n = 1..=order (the
    /// local expansion of `(d + zeta)^-n`; each `n` a contiguous row over `l`).
    binom_shift: Vec<f64>,
    /// `C(n, k)` at `[n * (order + 2) + k]` for 0 <= k <= n <= order + 1 (shifting moments and
    /// local expansions).
    binom: Vec<f64>,
}

impl Tables {
    fn new(order: usize, tolerance: f64) -> Tables {
        let w = order + 2;
        let mut binom = vec![0.0; w * w];
        for n in 0..=order + 1 {
            binom[n * w] = 1.0;
            for k in 1..=n {
                binom[n * w + k] =
                    binom[(n - 1) * w + k - 1] + if k < n { binom[(n - 1) * w + k] } else { 0.0 };
            }
        }
        let mut binom_shift = vec![0.0; (order + 2) * w];
        for l in 0..=order + 1 {
            for n in 1..=order {
                // C(n + l - 1, l) as a product (exact in f64 for these sizes).
                let mut c = 1.0;
                for k in 1..=l {
                    c = c * (n + k - 1) as f64 / k as f64;
                }
                binom_shift[n * (order + 2) + l] = c;
            }
        }
        Tables {
            thresholds: (1..=order)
                .map(|k| {
                    // The largest ratio r with terms_needed(r) <= k, found on the same test.
                    let mut lo = 0.0;
                    let mut hi = 1.0;
                    for _ in 0..60 {
                        let mid = 0.5 * (lo + hi);
                        if terms_needed(mid, tolerance, order) <= k {
                            lo = mid;
                        } else {
                            hi = mid;
                        }
                    }
                    lo
                })
                .collect(),
            inverse: (0..=order + 1)
                .map(|k| if k == 0 { 0.0 } else { 1.0 / k as f64 })
                .collect(),
            binom_shift,
            binom,
        }
    }
}

/// Adds the multipole moments `child` (about a centre at `d` from the new one) to `out`, shifted
/// to the new centre (Greengard & Rokhlin 1987, lemma 2.2): `a_n += sum_k C(n, k) a_k d^(n - k)`.
/// `tolerance` picks the cached binomial table; `out` is at most as long as `child`.
pub fn shift_moments(child: &[C64], d: C64, tolerance: f64, out: &mut [C64]) {
    let t = tables(child.len() - 1, tolerance);
    let mut dpow = vec![C64::new(0.0, 0.0); child.len()];
    t.shift(child, d, &mut dpow, out);
}

impl Tables {
    /// [`shift_moments`] with this table's binomials; `scaled` (as long as `child`) is scratch.
    ///
    /// Scaled form: with `b_k = a_k d^-k`, `a_n += d^n sum_k C(n, k) b_k`, so the inner sum
    /// multiplies complex numbers by real binomials only. Each term is the unscaled term over
    /// `d^n`, so the rounding is of the same size. When `d` is zero, or the powers of `d` would
    /// leave the range of f64, the terms are summed unscaled.
    fn shift(&self, child: &[C64], d: C64, scaled: &mut [C64], out: &mut [C64]) {
        let w = child.len();
        let bw = self.binom_width();
        debug_assert!(out.len() <= w && w <= bw);
        if !self.scale_by(child, d, scaled) {
            let mut dpow = C64::new(1.0, 0.0);
            for m in 0..w {
                scaled[m] = dpow;
                dpow *= d;
            }
            for (n, o) in out.iter_mut().enumerate() {
                let mut acc = C64::new(0.0, 0.0);
                for k in 0..=n {
                    acc += child[k] * scaled[n - k] * self.binom[n * bw + k];
                }
                *o += acc;
            }
            return;
        }
        // Two rows at a time (n and n + 1 share the terms k <= n): each row's sum still runs
        // over k in order, so the bits are those of one row at a time.
        let mut dn = C64::new(1.0, 0.0);
        let len = out.len();
        let mut n = 0;
        while n + 1 < len {
            let row = &self.binom[n * bw..n * bw + n + 1];
            let next = &self.binom[(n + 1) * bw..(n + 1) * bw + n + 2];
            let (mut acc, mut acc2) = (C64::new(0.0, 0.0), C64::new(0.0, 0.0));
            for ((b, &c), &c2) in scaled[..=n].iter().zip(row).zip(next) {
                acc += b * c;
                acc2 += b * c2;
            }
            acc2 += scaled[n + 1] * next[n + 1];
            out[n] += acc * dn;
            dn *= d;
            out[n + 1] += acc2 * dn;
            dn *= d;
            n += 2;
        }
        if n < len {
            let row = &self.binom[n * bw..n * bw + n + 1];
            let mut acc = C64::new(0.0, 0.0);
            for (b, &c) in scaled[..=n].iter().zip(row) {
                acc += b * c;
            }
            out[n] += acc * dn;
        }
    }

    /// Row width of `binom`.
    #[inline]
    fn binom_width(&self) -> usize {
        self.inverse.len()
    }

    /// Writes `a_k d^-k` into `scaled` and returns true when `d` is non-zero, its powers up to
    /// the length of `a` stay within the range of f64 (below 1e±250) and every scaled value is
    /// finite; returns false otherwise (the caller then uses the unscaled sums).
    #[inline]
    fn scale_by(&self, a: &[C64], d: C64, scaled: &mut [C64]) -> bool {
        let nd = (d.re * d.re + d.im * d.im).sqrt();
        if nd == 0.0 || !nd.is_finite() || (a.len() as f64) * nd.dln().abs() > 575.0 {
            return false;
        }
        let inv = C64::new(1.0, 0.0) / d;
        let mut p = C64::new(1.0, 0.0);
        let mut finite = true;
        for (s, &ak) in scaled.iter_mut().zip(a) {
            *s = ak * p;
            finite &= s.re.is_finite() && s.im.is_finite();
            p *= inv;
        }
        finite
    }

    /// Re-expands the local expansion `c` (coefficients of `sum_l c_l zeta^l`) about a centre
    /// at `delta` from its own and adds its terms `l >= 1` to `out`: `q_j = sum_{l >= j} C(l,
    /// j) c_l delta^(l - j)` (an exact Taylor shift), in the scaled form `q_j = delta^-j sum_l
    /// C(l, j) (c_l delta^l)` (see [`Tables::shift`]). `scaled` is scratch as long as `c`.
    fn shift_local(&self, c: &[C64], delta: C64, scaled: &mut [C64], out: &mut [C64]) {
        let filled = c.len() - 1;
        let bw = self.binom_width();
        let inv_delta = C64::new(1.0, 0.0) / delta;
        if !self.scale_by(c, inv_delta, scaled) {
            // Repeated synthetic division (Horner), unscaled.
            scaled.copy_from_slice(c);
            for i in 0..filled {
                for j in (i..filled).rev() {
                    let next = scaled[j + 1];
                    scaled[j] += delta * next;
                }
            }
            for l in 1..=filled {
                out[l] += scaled[l];
            }
            return;
        }
        let mut dinv = inv_delta;
        for j in 1..=filled {
            let mut acc = C64::new(0.0, 0.0);
            for (l, e) in scaled.iter().enumerate().skip(j) {
                acc += e * self.binom[l * bw + j];
            }
            out[j] += acc * dinv;
            dinv *= inv_delta;
        }
    }
}

/// The [`Tables`] of `order` and `tolerance`, from a process-wide cache.
fn tables(order: usize, tolerance: f64) -> Arc<Tables> {
    static CACHE: Mutex<Vec<(usize, u64, Arc<Tables>)>> = Mutex::new(Vec::new());
    let mut cache = CACHE.lock().unwrap_or_else(|e| e.into_inner());
    let key = tolerance.to_bits();
    if let Some((_, _, t)) = cache.iter().find(|(o, k, _)| *o == order && *k == key) {
        return Arc::clone(t);
    }
    let t = Arc::new(Tables::new(order, tolerance));
    cache.push((order, key, Arc::clone(&t)));
    t
}

#[derive(Debug, Clone, Copy)]
struct Cell {
    start: usize,
    end: usize,
    centre: [f64; 2],
    radius: f64,
    core: f64,
    children: Option<(usize, usize)>,
}

/// A tree over a set of [`Elements`] that evaluates their velocity and stream function at any
/// point to a relative tolerance.
#[derive(Debug, Clone)]
pub struct Tree {
    xs: Vec<f64>,
    ys: Vec<f64>,
    /// Position of each stored element in the elements given to [`Tree::new`].
    index: Vec<usize>,
    gs: Vec<f64>,
    qs: Vec<f64>,
    d2s: Vec<f64>,
    cells: Vec<Cell>,
    /// Multipole moments, `order + 1` per cell.
    moments: Vec<C64>,
    order: usize,
    theta: f64,
    /// Cores from a far cell's blobs to the point ([`point_vortex_cut`] of the tolerance).
    core_cut: f64,
    /// Constants of the expansions for this order and tolerance (shared between trees).
    tables: Arc<Tables>,
    /// True when some element has a source strength (the direct sums skip them otherwise).
    sources: bool,
    /// m^2. The squared core every element shares, when they all share one (see
    /// [`Tree::velocity_at_elements`]).
    uniform_delta_sq: Option<f64>,
}

impl Tree {
    /// Builds the tree for `elements` with opening ratio `theta` (cell radius over distance,
    /// 0.2 to 0.8) and relative tolerance `tolerance` of the far-field expansions.
    pub fn new(elements: &Elements, theta: f64, tolerance: f64) -> Tree {
        let n = elements.len();
        let order = ((tolerance.dln() / theta.dln()).ceil().max(1.0) as usize).min(60);
        let mut idx: Vec<usize> = (0..n).collect();
        let mut cells = Vec::with_capacity(2 * n / LEAF + 2);
        if n > 0 {
            build(elements, &mut idx, 0, n, &mut cells);
        }
        let pick = |v: &Vec<f64>| idx.iter().map(|&i| v[i]).collect::<Vec<f64>>();
        let mut tree = Tree {
            xs: pick(&elements.x),
            ys: pick(&elements.y),
            index: idx.clone(),
            gs: pick(&elements.gamma),
            qs: pick(&elements.source),
            d2s: pick(&elements.delta_sq),
            cells,
            moments: Vec::new(),
            order,
            theta,
            core_cut: point_vortex_cut(tolerance),
            tables: tables(order, tolerance),
            sources: elements.source.iter().any(|&q| q != 0.0),
            uniform_delta_sq: match elements.delta_sq.first() {
                Some(&d2) if elements.delta_sq.iter().all(|&e| e == d2) => Some(d2),
                _ => None,
            },
        };
        tree.moments = vec![C64::new(0.0, 0.0); tree.cells.len() * (order + 1)];
        // Leaves sum their elements; a parent shifts its children's moments to its own centre
        // (children always come after their parent, so a reverse sweep sees them first):
        // a_n(parent) = sum_k C(n, k) a_k(child) d^(n - k), d = child centre - parent centre.
        let tables = Arc::clone(&tree.tables);
        let mut dpow = vec![C64::new(0.0, 0.0); order + 1];
        for ci in (0..tree.cells.len()).rev() {
            let cell = tree.cells[ci];
            let base = ci * (order + 1);
            match cell.children {
                None => {
                    let Tree {
                        xs,
                        ys,
                        gs,
                        qs,
                        d2s,
                        moments,
                        ..
                    } = &mut tree;
                    let columns = Columns {
                        x: xs,
                        y: ys,
                        gamma: gs,
                        source: qs,
                        delta_sq: d2s,
                    };
                    let out = &mut moments[base..=base + order];
                    add_moments(columns, cell.start, cell.end, cell.centre, out);
                }
                Some((a, b)) => {
                    for child in [a, b] {
                        let cc = tree.cells[child].centre;
                        let d = C64::new(cc[0] - cell.centre[0], cc[1] - cell.centre[1]);
                        // Children come after their parent in the moment array.
                        let (head, tail) = tree.moments.split_at_mut(child * (order + 1));
                        let out = &mut head[base..base + order + 1];
                        tables.shift(&tail[..order + 1], d, &mut dpow, out);
                    }
                }
            }
        }
        tree
    }

    /// Expansion order needed at radius-over-distance `ratio`: [`terms_needed`] of the tree's
    /// tolerance, read from the precomputed thresholds.
    #[inline]
    fn order_for(&self, ratio: f64) -> usize {
        self.tables
            .thresholds
            .iter()
            .position(|&th| ratio <= th)
            .map_or(self.order, |k| k + 1)
    }

    /// Direct sum at `p` over the elements of `cell`.
    #[inline]
    fn direct<const PSI: bool>(&self, cell: &Cell, p: [f64; 2]) -> ([f64; 2], f64) {
        let columns = self.columns();
        // Beyond six cores of every element (the cell's largest core) the shield is 1.
        let dx = p[0] - cell.centre[0];
        let dy = p[1] - cell.centre[1];
        let gap = (dx * dx + dy * dy).sqrt() - cell.radius;
        let shielded = gap <= SHIELD_CUT * cell.core;
        let (lo, hi) = (cell.start, cell.end);
        if self.sources {
            direct_range::<PSI, true>(columns, lo, hi, p, shielded)
        } else {
            direct_range::<PSI, false>(columns, lo, hi, p, shielded)
        }
    }

    /// The stored elements' columns (in tree order).
    fn columns(&self) -> Columns<'_> {
        Columns {
            x: &self.xs,
            y: &self.ys,
            gamma: &self.gs,
            source: &self.qs,
            delta_sq: &self.d2s,
        }
    }

    /// Expansion order used.
    pub fn order(&self) -> usize {
        self.order
    }

    /// m/s and m^2/s. Velocity and stream function at `p`. The stream function is that of the
    /// vortices and is meaningful only for trees without sources.
    pub fn eval(&self, p: [f64; 2]) -> ([f64; 2], f64) {
        self.eval_impl::<true>(p)
    }

    /// m/s. Velocity at `p` only (cheaper than [`Tree::eval`]).
    pub fn velocity(&self, p: [f64; 2]) -> [f64; 2] {
        self.eval_impl::<false>(p).0
    }

    fn eval_impl<const PSI: bool>(&self, p: [f64; 2]) -> ([f64; 2], f64) {
        if self.cells.is_empty() {
            return ([0.0, 0.0], 0.0);
        }
        let (mut u, mut v, mut psi) = (0.0, 0.0, 0.0);
        let mut stack = [0usize; 128];
        let mut top = 1;
        stack[0] = 0;
        while top > 0 {
            top -= 1;
            let cell = &self.cells[stack[top]];
            let ci = stack[top];
            let dz = C64::new(p[0] - cell.centre[0], p[1] - cell.centre[1]);
            let d = (dz.re * dz.re + dz.im * dz.im).sqrt();
            if cell.radius < self.theta * d && d - cell.radius > self.core_cut * cell.core {
                let base = ci * (self.order + 1);
                // The terms this cell needs: the truncation error after order p is below
                // (R / d)^(p + 1), so the smallest p with (R / d)^p <= tolerance keeps the
                // guarantee of the full order (which is that p for R / d = theta).
                let p_used = self.order_for(cell.radius / d);
                let t = C64::new(1.0, 0.0) / dz;
                let w = horner2(&self.moments[base..=base + p_used], t) * t;
                u += w.re;
                v -= w.im;
                if PSI {
                    // Complex potential a_0 log(dz) - sum a_m / (m dz^m); its imaginary part is
                    // the stream function of the vortices (a tree holding sources has no psi).
                    let mut pacc = self.moments[base + p_used] / p_used as f64;
                    for m in (1..p_used).rev() {
                        pacc = pacc * t + self.moments[base + m] / m as f64;
                    }
                    // Im[a_0 log dz] = Re a_0 arg dz + Im a_0 ln |dz|; vortices alone give a
                    // purely imaginary a_0 and need no angle.
                    let a0 = self.moments[base];
                    let mut f = a0.im * 0.5 * (dz.re * dz.re + dz.im * dz.im).dln();
                    if a0.re != 0.0 {
                        f += a0.re * dz.im.datan2(dz.re);
                    }
                    psi += f - (pacc * t).im;
                }
            } else if let Some((a, b)) = cell.children {
                stack[top] = a;
                stack[top + 1] = b;
                top += 2;
            } else {
                let (w, s) = self.direct::<PSI>(cell, p);
                u += w[0];
                v += w[1];
                psi += s;
            }
        }
        ([u, v], psi)
    }
}

impl Tree {
    /// m/s and m^2/s. Velocity at every point of `points`, and the stream function too when
    /// `with_psi` (zero otherwise), in one pass: the points are grouped in leaves of their own
    /// tree, and each far cell acts on a whole leaf through one local (Taylor) expansion of the
    /// complex potential about the leaf's centre (Greengard & Rokhlin 1987, lemma 2.3),
    /// evaluated at each point; near cells are summed directly. A cell is far from a leaf when
    /// the two radii together are below `theta` times the distance of the centres (and the cell's
    /// blobs are [`point_vortex_cut`] cores clear of the leaf); the order of each expansion comes from the same
    /// tolerance as [`Tree::eval`], for the ratio of the summed radii to the distance.
    pub fn eval_points(&self, points: &[[f64; 2]], with_psi: bool) -> Vec<([f64; 2], f64)> {
        let n = points.len();
        let mut out = vec![([0.0, 0.0], 0.0); n];
        if n == 0 {
            return out;
        }
        if self.cells.is_empty() {
            return out;
        }
        let mut targets = Elements::default();
        for p in points {
            targets.push(*p, 0.0, 0.0, 0.0);
        }
        let mut idx: Vec<usize> = (0..n).collect();
        let mut cells = Vec::with_capacity(2 * n / TARGET_LEAF + 2);
        build_with(&targets, &mut idx, 0, n, &mut cells, TARGET_LEAF);
        let leaves: Vec<Cell> = cells.into_iter().filter(|c| c.children.is_none()).collect();
        let per_leaf: Vec<Vec<([f64; 2], f64)>> =
            crate::sim::par_map(leaves.len(), PARALLEL_LEAVES, |li| {
                let leaf = &leaves[li];
                let pts: Vec<[f64; 2]> = idx[leaf.start..leaf.end]
                    .iter()
                    .map(|&i| points[i])
                    .collect();
                if with_psi {
                    self.leaf_eval::<true>(leaf, &pts)
                } else {
                    self.leaf_eval::<false>(leaf, &pts)
                }
            });
        for (leaf, vals) in leaves.iter().zip(per_leaf) {
            for (&i, v) in idx[leaf.start..leaf.end].iter().zip(vals) {
                out[i] = v;
            }
        }
        out
    }

    /// A foil's outline: velocity and stream function at its `nodes` (in order along it) and
    /// velocity at the panel midpoints `mids` between them (`mids[k]` between nodes `k` and
    /// `k + 1`). Each run of nodes and the midpoints among them form one target leaf, so both
    /// come from one traversal (see [`Tree::eval_points`]).
    pub fn eval_outline(&self, nodes: &[[f64; 2]], mids: &[[f64; 2]]) -> OutlineField {
        if self.cells.is_empty() {
            return (
                vec![([0.0, 0.0], 0.0); nodes.len()],
                vec![[0.0, 0.0]; mids.len()],
            );
        }
        // One thread: even 400 panels make only 25 groups, below sim::par_map's worth.
        let groups = nodes.len().div_ceil(TARGET_LEAF);
        let per_leaf: Vec<_> = (0..groups)
            .map(|g| {
                let lo = g * TARGET_LEAF;
                let nodes_here = &nodes[lo..(lo + TARGET_LEAF).min(nodes.len())];
                let mids_here = &mids[lo.min(mids.len())..(lo + TARGET_LEAF).min(mids.len())];
                let mut all = nodes_here.to_vec();
                all.extend_from_slice(mids_here);
                let field = self.leaf_field::<true>(&enclosing(&all));
                let at_nodes: Vec<([f64; 2], f64)> = nodes_here
                    .iter()
                    .map(|&p| self.field_at::<true>(&field, p))
                    .collect();
                let at_mids: Vec<[f64; 2]> = mids_here
                    .iter()
                    .map(|&p| self.field_at::<false>(&field, p).0)
                    .collect();
                (at_nodes, at_mids)
            })
            .collect();
        let mut out_nodes = Vec::with_capacity(nodes.len());
        let mut out_mids = Vec::with_capacity(mids.len());
        for (n, m) in per_leaf {
            out_nodes.extend(n);
            out_mids.extend(m);
        }
        (out_nodes, out_mids)
    }

    /// m/s. Velocity at each of the tree's own elements, in the order they were given.
    ///
    /// When all the elements are blobs of one core without sources, the tree meets itself in a
    /// dual traversal (the cell-cell interactions of the fast multipole method, Greengard &
    /// Rokhlin 1987; here on the binary tree, with the opening test of [`Tree::eval_points`]
    /// on pairs of cells): two cells far from each other exchange local expansions, which
    /// are passed down from each cell to its children; two leaves near each other are summed
    /// once for both (each blob pair's distance and shield serve both blobs, with opposite
    /// signs). Otherwise each leaf of the tree is a target leaf (see [`Tree::eval_points`]).
    /// Each part runs in a fixed order, so the result does not depend on the number of threads.
    pub fn velocity_at_elements(&self) -> Vec<[f64; 2]> {
        self.velocity_at_elements_with(&[]).0
    }

    /// m/s. [`Tree::velocity_at_elements`], plus the velocity of the far fields `fields` (at
    /// most 32) at every element far enough from each: such a far field enters the local expansion
    /// of the largest cells clear of it (the same opening test, with its own clearance in place
    /// of the cells' cores), and so costs nothing more per element. Also returns for each
    /// element (in the order given) a mask with bit `s` set when far field `s` was not included
    /// there; the caller adds it by its own means. (Every bit is set when the far fields' moments
    /// are not of this tree's order, or the tree does not meet itself; see
    /// [`Tree::velocity_at_elements`].)
    pub fn velocity_at_elements_with(&self, fields: &[FarField]) -> (Vec<[f64; 2]>, Vec<u32>) {
        assert!(fields.len() <= 32, "at most 32 far fields");
        let all = if fields.is_empty() {
            0
        } else {
            u32::MAX >> (32 - fields.len())
        };
        let leaves: Vec<usize> = (0..self.cells.len())
            .filter(|&c| self.cells[c].children.is_none())
            .collect();
        let n = self.xs.len();
        let Some(delta_sq) = self.uniform_delta_sq.filter(|_| !self.sources) else {
            return (self.velocity_at_elements_one_way(&leaves), vec![all; n]);
        };
        if fields.iter().any(|f| f.moments.len() != self.order + 1) {
            return (self.velocity_at_elements(), vec![all; n]);
        }
        let (far, near) = self.self_interactions();
        let ncells = self.cells.len();
        // Each cell's far sources, in the order of the traversal.
        let mut far_of: Vec<Vec<usize>> = vec![Vec::new(); ncells];
        for &(target, source) in &far {
            far_of[target].push(source);
        }
        let mut locals: Vec<(Vec<C64>, usize)> =
            crate::sim::par_map(ncells, 2 * PARALLEL_LEAVES, |ci| {
                let mut local = vec![C64::new(0.0, 0.0); self.order + 2];
                let mut filled = 0;
                if !far_of[ci].is_empty() {
                    let mut scratch = M2lScratch::new(self.order);
                    for &source in &far_of[ci] {
                        let f =
                            self.m2l::<false>(source, &self.cells[ci], &mut local, &mut scratch);
                        filled = filled.max(f);
                    }
                }
                (local, filled)
            });
        // The far fields, each into the largest cells clear of it; the leaves it does not reach.
        let mut missed = vec![0u32; ncells];
        if !self.cells.is_empty() {
            let mut scratch = M2lScratch::new(self.order);
            let mut stack = Vec::new();
            for (s, f) in fields.iter().enumerate() {
                stack.push(0usize);
                while let Some(ci) = stack.pop() {
                    let cell = &self.cells[ci];
                    let dist = ((cell.centre[0] - f.centre[0]).powi(2)
                        + (cell.centre[1] - f.centre[1]).powi(2))
                    .sqrt();
                    let reach = cell.radius + f.radius;
                    if reach < self.theta * dist && dist - reach > f.clearance {
                        let (local, filled) = &mut locals[ci];
                        let source = (f.moments, f.centre, f.radius);
                        let got = self.m2l_from::<false>(source, cell, local, &mut scratch);
                        *filled = (*filled).max(got);
                    } else if let Some((a, b)) = cell.children {
                        stack.push(b);
                        stack.push(a);
                    } else {
                        missed[ci] |= 1 << s;
                    }
                }
            }
        }
        // Down the tree (a parent comes before its children): each child adds its parent's
        // expansion, re-expanded about its own centre (exact: a polynomial's Taylor shift).
        let mut scaled = Vec::new();
        for ci in 0..ncells {
            if let Some((x, y)) = self.cells[ci].children {
                let filled = locals[ci].1;
                if filled == 0 {
                    continue;
                }
                // Children come after their parent.
                let (head, tail) = locals.split_at_mut(ci + 1);
                let parent = &head[ci].0[..=filled];
                scaled.resize(filled + 1, C64::new(0.0, 0.0));
                for child in [x, y] {
                    let cc = self.cells[child].centre;
                    let pc = self.cells[ci].centre;
                    let delta = C64::new(cc[0] - pc[0], cc[1] - pc[1]);
                    let (local, f) = &mut tail[child - ci - 1];
                    self.tables
                        .shift_local(parent, delta, &mut scaled[..=filled], local);
                    *f = (*f).max(filled);
                }
            }
        }
        let (mut u, mut v) = (vec![0.0; n], vec![0.0; n]);
        let mut masks = vec![0u32; n];
        for &c in &leaves {
            let cell = &self.cells[c];
            let (local, filled) = &locals[c];
            for k in cell.start..cell.end {
                masks[self.index[k]] = missed[c];
                let p = [self.xs[k], self.ys[k]];
                let (w, _) = local_at::<false>(cell.centre, &local[..=*filled], p);
                u[k] = w[0];
                v[k] = w[1];
            }
        }
        // The near pairs in a fixed number of parts (parts write into their own sums, added
        // in part order), so that they can run on several threads with the same result.
        let parts = if leaves.len() >= PARALLEL_LEAVES {
            NEAR_PARTS
        } else {
            1
        };
        let columns = self.columns();
        let sums = crate::sim::par_map(parts, 2, |part| {
            let (mut u, mut v) = (vec![0.0; n], vec![0.0; n]);
            let count = near.len();
            for &(ca, cb) in &near[part * count / parts..(part + 1) * count / parts] {
                let (a, b) = (&self.cells[ca], &self.cells[cb]);
                if ca == cb {
                    mutual_self(columns, a, delta_sq, &mut u, &mut v);
                    continue;
                }
                let gap = ((a.centre[0] - b.centre[0]).powi(2)
                    + (a.centre[1] - b.centre[1]).powi(2))
                .sqrt()
                    - a.radius
                    - b.radius;
                // Beyond six cores every shield is exactly 1 (see `velocity_range`).
                if gap <= SHIELD_CUT * delta_sq.sqrt() {
                    mutual_block::<true>(columns, a, b, delta_sq, &mut u, &mut v);
                } else {
                    mutual_block::<false>(columns, a, b, delta_sq, &mut u, &mut v);
                }
            }
            (u, v)
        });
        for (su, sv) in &sums {
            for k in 0..n {
                u[k] += su[k];
                v[k] += sv[k];
            }
        }
        let mut out = vec![[0.0, 0.0]; n];
        for k in 0..n {
            out[self.index[k]] = [u[k], v[k]];
        }
        (out, masks)
    }

    /// The tree against itself: the far pairs `(target, source)` of cells (each unordered pair
    /// listed both ways) and the near pairs of leaves `(a, b)`, `a <= b` (a leaf with itself
    /// included). Two cells are far when their radii together are below `theta` times the
    /// distance of their centres and the blobs of both are [`point_vortex_cut`] cores clear of
    /// the other; otherwise the larger is opened (a leaf is never opened).
    fn self_interactions(&self) -> (CellPairs, CellPairs) {
        let mut far = Vec::new();
        let mut near = Vec::new();
        if self.cells.is_empty() {
            return (far, near);
        }
        let mut stack = vec![(0usize, 0usize)];
        while let Some((a, b)) = stack.pop() {
            let (ca, cb) = (&self.cells[a], &self.cells[b]);
            if a == b {
                match ca.children {
                    None => near.push((a, a)),
                    Some((x, y)) => {
                        stack.push((x, y));
                        stack.push((y, y));
                        stack.push((x, x));
                    }
                }
                continue;
            }
            let dist = ((ca.centre[0] - cb.centre[0]).powi(2)
                + (ca.centre[1] - cb.centre[1]).powi(2))
            .sqrt();
            let reach = ca.radius + cb.radius;
            if reach < self.theta * dist && dist - reach > self.core_cut * larger(ca.core, cb.core)
            {
                far.push((a, b));
                far.push((b, a));
                continue;
            }
            let open_a = match (ca.children, cb.children) {
                (None, None) => {
                    near.push((a.min(b), a.max(b)));
                    continue;
                }
                (Some(_), None) => true,
                (None, Some(_)) => false,
                (Some(_), Some(_)) => ca.radius >= cb.radius,
            };
            if open_a {
                let (x, y) = ca.children.expect("opened cells have children");
                stack.push((y, b));
                stack.push((x, b));
            } else {
                let (x, y) = cb.children.expect("opened cells have children");
                stack.push((a, y));
                stack.push((a, x));
            }
        }
        (far, near)
    }

    /// [`Tree::velocity_at_elements`] with every near leaf summed one way, for elements of
    /// several cores or with sources.
    fn velocity_at_elements_one_way(&self, leaves: &[usize]) -> Vec<[f64; 2]> {
        let per_leaf = crate::sim::par_map(leaves.len(), PARALLEL_LEAVES, |li| {
            let leaf = &self.cells[leaves[li]];
            let pts: Vec<[f64; 2]> = (leaf.start..leaf.end)
                .map(|k| [self.xs[k], self.ys[k]])
                .collect();
            self.leaf_eval::<false>(leaf, &pts)
        });
        let mut out = vec![[0.0, 0.0]; self.xs.len()];
        for (&c, vals) in leaves.iter().zip(per_leaf) {
            let leaf = &self.cells[c];
            for (k, v) in (leaf.start..leaf.end).zip(vals) {
                out[self.index[k]] = v.0;
            }
        }
        out
    }

    /// The points `pts` of one target leaf (centre and radius of `leaf`): far cells through a
    /// local expansion, near leaves directly.
    fn leaf_eval<const PSI: bool>(&self, leaf: &Cell, pts: &[[f64; 2]]) -> Vec<([f64; 2], f64)> {
        let field = self.leaf_field::<PSI>(leaf);
        pts.iter()
            .map(|&p| self.field_at::<PSI>(&field, p))
            .collect()
    }

    /// The interactions of one target leaf (centre and radius of `leaf`) with the tree: the
    /// far cells summed into one local expansion about the leaf's centre, and the near leaves.
    /// With `PSI` the expansion carries the stream function's constant too.
    fn leaf_field<const PSI: bool>(&self, leaf: &Cell) -> LeafField {
        // Coefficients c_l of the complex potential sum_l c_l zeta^l about the leaf's centre;
        // only the imaginary part of c_0 (the stream function's constant) is kept.
        let mut local = vec![C64::new(0.0, 0.0); self.order + 2];
        let mut near: Vec<usize> = Vec::new();
        let mut stack = [0usize; 128];
        let mut top = 1;
        stack[0] = 0;
        let mut scratch = M2lScratch::new(self.order);
        // Highest local coefficient any far cell has filled.
        let mut filled = 0usize;
        while top > 0 {
            top -= 1;
            let ci = stack[top];
            let cell = &self.cells[ci];
            let dist = ((leaf.centre[0] - cell.centre[0]).powi(2)
                + (leaf.centre[1] - cell.centre[1]).powi(2))
            .sqrt();
            let reach = leaf.radius + cell.radius;
            if reach < self.theta * dist && dist - reach > self.core_cut * cell.core {
                filled = filled.max(self.m2l::<PSI>(ci, leaf, &mut local, &mut scratch));
            } else if let Some((a, b)) = cell.children {
                stack[top] = a;
                stack[top + 1] = b;
                top += 2;
            } else {
                near.push(ci);
            }
        }
        local.truncate(filled + 1);
        LeafField {
            centre: leaf.centre,
            local,
            near,
        }
    }

    /// Adds the far cell `ci`, as a local expansion about the centre of `target` (a disc of
    /// its radius), to `local` (`c_l` of the complex potential `sum_l c_l zeta^l`; with `PSI`
    /// the imaginary part of `c_0` too), and returns the highest `l` it filled (Greengard &
    /// Rokhlin 1987, lemma 2.3). The caller has checked that the two are far apart.
    #[inline]
    fn m2l<const PSI: bool>(
        &self,
        ci: usize,
        target: &Cell,
        local: &mut [C64],
        scratch: &mut M2lScratch,
    ) -> usize {
        let cell = &self.cells[ci];
        let a = &self.moments[ci * (self.order + 1)..(ci + 1) * (self.order + 1)];
        self.m2l_from::<PSI>((a, cell.centre, cell.radius), target, local, scratch)
    }

    /// [`Tree::m2l`] from the moments `a` (the tree's order and convention) of a disc of centre
    /// `centre` and radius `radius` (m).
    #[inline(always)]
    fn m2l_from<const PSI: bool>(
        &self,
        (a, centre, radius): (&[C64], [f64; 2], f64),
        target: &Cell,
        local: &mut [C64],
        scratch: &mut M2lScratch,
    ) -> usize {
        let M2lScratch { tpow, u, acc } = scratch;
        // d: from the source cell's centre to the target's centre.
        let d = C64::new(target.centre[0] - centre[0], target.centre[1] - centre[1]);
        let dist = (d.re * d.re + d.im * d.im).sqrt();
        // Two truncations, each to the tolerance: the cell's multipole series (its radius over
        // its distance from the nearest point of the target) and the target's Taylor series (its
        // radius over its distance from the nearest point of the cell); each ratio is below
        // theta.
        let pm = self.order_for(radius / (dist - target.radius));
        let pl = self.order_for(target.radius / (dist - radius));
        let t = C64::new(1.0, 0.0) / d;
        // u_n = a_n t^n / n (n >= 1); tpow[l] = t^l.
        tpow[0] = C64::new(1.0, 0.0);
        for l in 1..=pm.max(pl + 1) {
            tpow[l] = tpow[l - 1] * t;
        }
        for nn in 1..=pm {
            u[nn] = a[nn] * tpow[nn] * self.tables.inverse[nn];
        }
        // c_l = (-1)^(l+1) t^l [a_0 / l + sum_n C(n+l-1, l) u_n]   (l >= 1), summed over n in
        // the outer loop so that the inner one, over l, has independent sums.
        let acc = &mut acc[..pl + 2];
        for l in 1..=pl + 1 {
            acc[l] = a[0] * self.tables.inverse[l];
        }
        let width = self.order + 2;
        for nn in 1..=pm {
            let un = u[nn];
            let row = &self.tables.binom_shift[nn * width..nn * width + pl + 2];
            for (al, &b) in acc[1..].iter_mut().zip(&row[1..]) {
                *al += un * b;
            }
        }
        for l in 1..=pl + 1 {
            let term = acc[l] * tpow[l];
            if l % 2 == 1 {
                local[l] += term;
            } else {
                local[l] -= term;
            }
        }
        if PSI {
            // Im c_0 = Im[a_0 log d - sum_n u_n].
            let mut im = a[0].im * 0.5 * (d.re * d.re + d.im * d.im).dln();
            if a[0].re != 0.0 {
                im += a[0].re * d.im.datan2(d.re);
            }
            for un in &u[1..=pm] {
                im -= un.im;
            }
            local[0].im += im;
        }
        pl + 1
    }

    /// m/s and m^2/s. Velocity and (with `PSI`, when the field was made with it) stream
    /// function at `p`, a point of the leaf `field` was made for.
    #[inline]
    fn field_at<const PSI: bool>(&self, field: &LeafField, p: [f64; 2]) -> ([f64; 2], f64) {
        let ([mut uu, mut vv], mut psi) = local_at::<PSI>(field.centre, &field.local, p);
        for &ci in &field.near {
            let (v, s) = self.direct::<PSI>(&self.cells[ci], p);
            uu += v[0];
            vv += v[1];
            psi += s;
        }
        ([uu, vv], psi)
    }
}

/// m/s and m^2/s. The far part of [`Tree::field_at`]: the local expansion `local` (`c_l` of
/// `sum_l c_l zeta^l` about `centre`, up to the highest filled) at `p`.
#[inline]
fn local_at<const PSI: bool>(centre: [f64; 2], local: &[C64], p: [f64; 2]) -> ([f64; 2], f64) {
    let filled = local.len() - 1;
    let z = C64::new(p[0] - centre[0], p[1] - centre[1]);
    // w = sum_l l c_l zeta^(l-1); psi = Im sum_l c_l zeta^l.
    let mut w = C64::new(0.0, 0.0);
    for l in (1..=filled).rev() {
        w = w * z + local[l] * (l as f64);
    }
    let mut psi = 0.0;
    if PSI {
        let mut f = C64::new(0.0, 0.0);
        for l in (1..=filled).rev() {
            f = (f + local[l]) * z;
        }
        psi = local[0].im + f.im;
    }
    ([w.re, -w.im], psi)
}

/// Pairs of cell indices.
type CellPairs = Vec<(usize, usize)>;

/// Work space of [`Tree::m2l`], sized for one expansion order.
struct M2lScratch {
    /// Powers `t^l` of `t = 1 / d`.
    tpow: Vec<C64>,
    /// Scaled moments `a_n t^n / n`.
    u: Vec<C64>,
    /// Sums over `n` for each `l`.
    acc: Vec<C64>,
}

impl M2lScratch {
    fn new(order: usize) -> M2lScratch {
        let zero = C64::new(0.0, 0.0);
        M2lScratch {
            tpow: vec![zero; order + 3],
            u: vec![zero; order + 2],
            acc: vec![zero; order + 2],
        }
    }
}

/// A far field for [`Tree::velocity_at_elements_with`]: the multipole moments `a_m` (m^(m+2)/s)
/// of singularities within `radius` of `centre`, in the tree's convention (complex velocity
/// `u - i v = sum_m a_m / (z - centre)^(m + 1)`, `a_m = sum_k s_k (z_k - centre)^m` with
/// `s_k = (q_k - i gamma_k) / (2 pi)`), valid to the tree's tolerance at points more than
/// `clearance` beyond the radius (the point-vortex cut of its blobs' cores).
#[derive(Debug, Clone, Copy)]
pub struct FarField<'a> {
    /// m. Centre of the disc holding the singularities.
    pub centre: [f64; 2],
    /// m. Radius of that disc.
    pub radius: f64,
    /// m. Distance beyond the radius from which the expansion holds.
    pub clearance: f64,
    /// Moments `a_0 ..= a_order`, the tree's order.
    pub moments: &'a [C64],
}

/// Velocity and stream function at a foil's nodes, and velocity at its panel midpoints.
pub type OutlineField = (Vec<([f64; 2], f64)>, Vec<[f64; 2]>);

/// What one target leaf sees of a [`Tree`]: the local expansion of its far cells and its near
/// leaves.
struct LeafField {
    centre: [f64; 2],
    /// Coefficients `c_l` of the complex potential `sum_l c_l zeta^l` about `centre`, up to the
    /// highest any far cell filled (only the imaginary part of `c_0` is kept).
    local: Vec<C64>,
    /// Cells summed directly.
    near: Vec<usize>,
}

/// m. Centre of the bounding box of `pts` and the largest distance of a point from it.
pub(crate) fn span(pts: &[[f64; 2]]) -> ([f64; 2], f64) {
    let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for p in pts {
        lo = [smaller(lo[0], p[0]), smaller(lo[1], p[1])];
        hi = [larger(hi[0], p[0]), larger(hi[1], p[1])];
    }
    let centre = [0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1])];
    // One square root, as in `split`.
    let radius = pts
        .iter()
        .map(|p| (p[0] - centre[0]).powi(2) + (p[1] - centre[1]).powi(2))
        .fold(0.0, larger)
        .sqrt();
    (centre, radius)
}

/// Adds the multipole moments about `centre` of elements `lo..hi` to `out` (`a_m` for
/// m = 0..out.len(), in the convention of [`FarField`]). Two elements at a time: their chains of
/// powers are independent, and each moment still adds the elements in order (the same sums as
/// one at a time).
fn add_moments(c: Columns, lo: usize, hi: usize, centre: [f64; 2], out: &mut [C64]) {
    let term = |k: usize| {
        let s = C64::new(c.source[k], -c.gamma[k]) / (2.0 * PI);
        let xi = C64::new(c.x[k] - centre[0], c.y[k] - centre[1]);
        (s, xi)
    };
    let mut k = lo;
    while k + 1 < hi {
        let ((mut pa, xa), (mut pb, xb)) = (term(k), term(k + 1));
        for m in out.iter_mut() {
            *m += pa;
            *m += pb;
            pa *= xa;
            pb *= xb;
        }
        k += 2;
    }
    if k < hi {
        let (mut pw, xi) = term(k);
        for m in out.iter_mut() {
            *m += pw;
            pw *= xi;
        }
    }
}

/// A leaf cell around `pts` (see [`span`]).
fn enclosing(pts: &[[f64; 2]]) -> Cell {
    let (centre, radius) = span(pts);
    Cell {
        start: 0,
        end: pts.len(),
        centre,
        radius,
        core: 0.0,
        children: None,
    }
}

fn build(
    el: &Elements,
    idx: &mut [usize],
    start: usize,
    end: usize,
    cells: &mut Vec<Cell>,
) -> usize {
    build_with(el, idx, start, end, cells, LEAF)
}

/// One element while a tree is built: its position (m), squared core (m^2) and index.
#[derive(Clone, Copy)]
struct Item {
    x: f64,
    y: f64,
    delta_sq: f64,
    index: usize,
}

/// [`build`] with leaves of at most `leaf` elements: `idx[start..end]` is reordered so that
/// each cell's elements are contiguous, and the cells are appended to `cells` (a parent before
/// its children). Returns the index of the cell made for `start..end`.
fn build_with(
    el: &Elements,
    idx: &mut [usize],
    start: usize,
    end: usize,
    cells: &mut Vec<Cell>,
    leaf: usize,
) -> usize {
    // The elements are gathered into one array first, so that the splits move them together
    // with their keys (no indirect loads while partitioning).
    let mut items: Vec<Item> = idx[start..end]
        .iter()
        .map(|&i| Item {
            x: el.x[i],
            y: el.y[i],
            delta_sq: el.delta_sq[i],
            index: i,
        })
        .collect();
    let me = split(&mut items, start, cells, leaf);
    for (slot, item) in idx[start..end].iter_mut().zip(&items) {
        *slot = item.index;
    }
    me
}

/// The cell of `items` (the elements `offset..offset + items.len()` of the tree) and, when it
/// holds more than `leaf`, its two halves split at the median of its longer side.
fn split(items: &mut [Item], offset: usize, cells: &mut Vec<Cell>, leaf: usize) -> usize {
    let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    let mut core: f64 = 0.0;
    for it in items.iter() {
        lo = [smaller(lo[0], it.x), smaller(lo[1], it.y)];
        hi = [larger(hi[0], it.x), larger(hi[1], it.y)];
        core = larger(core, it.delta_sq);
    }
    let centre = [0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1])];
    // One square root for the largest squared distance: a correctly rounded square root is
    // monotonic, so this is exactly the largest distance.
    let radius = items
        .iter()
        .map(|it| (it.x - centre[0]).powi(2) + (it.y - centre[1]).powi(2))
        .fold(0.0, larger)
        .sqrt();
    let me = cells.len();
    let n = items.len();
    cells.push(Cell {
        start: offset,
        end: offset + n,
        centre,
        radius,
        core: core.sqrt(),
        children: None,
    });
    if n > leaf {
        let mid = n / 2;
        if hi[0] - lo[0] >= hi[1] - lo[1] {
            items.select_nth_unstable_by(mid, |a, b| a.x.total_cmp(&b.x));
        } else {
            items.select_nth_unstable_by(mid, |a, b| a.y.total_cmp(&b.y));
        }
        let (left, right) = items.split_at_mut(mid);
        let a = split(left, offset, cells, leaf);
        let b = split(right, offset + mid, cells, leaf);
        cells[me].children = Some((a, b));
    }
    me
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn e1_matches_tabulated_values() {
        // Abramowitz & Stegun 1964, table 5.1: E1(0.5) = 0.5597736, E1(1) = 0.2193839,
        // E1(2) = 0.04890051, E1(5) = 0.001148296.
        for (x, e) in [
            (0.5, 0.5597736),
            (1.0, 0.2193839),
            (2.0, 0.04890051),
            (5.0, 0.001148296),
        ] {
            assert!(
                (exp_integral_e1(x) / e - 1.0).abs() < 1e-6,
                "{x}: {}",
                exp_integral_e1(x)
            );
        }
    }

    #[test]
    fn exp_nonpositive_matches_the_maths_library() {
        // libm's exp (a port of musl's, correctly rounded to within one unit in the last
        // place) is the reference; the blocked kernels need the shield to round-off only.
        let mut worst: f64 = 0.0;
        for i in 0..=40_000 {
            let x = -40.0 * i as f64 / 40_000.0;
            let r = exp_nonpositive(x) / x.dexp() - 1.0;
            worst = worst.max(r.abs());
        }
        assert!(worst < 4.0 * f64::EPSILON, "{worst:e}");
        assert_eq!(exp_nonpositive(0.0), 1.0);
    }

    #[test]
    fn blocked_velocity_sum_matches_the_blob_kernel() {
        // Every lane count and remainder, with and without sources, against gaussian_velocity
        // and the point-source formula summed one by one.
        let mut el = Elements::default();
        for k in 0..23 {
            let a = k as f64 * 0.7;
            el.push(
                [0.01 * a.cos() * k as f64, 0.01 * a.sin()],
                0.3 - 0.02 * k as f64,
                0.0,
                4e-4,
            );
        }
        el.push([0.05, 0.02], 0.0, 0.7, 0.0);
        let p = [0.03, 0.01];
        for hi in 0..=el.len() {
            let mut u = [0.0; 2];
            for k in 0..hi {
                let c = [el.x[k], el.y[k]];
                let v = gaussian_velocity(c, el.gamma[k], el.delta_sq[k], p);
                let (dx, dy) = (p[0] - c[0], p[1] - c[1]);
                let f = el.source[k] / (2.0 * PI * (dx * dx + dy * dy));
                u = [u[0] + v[0] + f * dx, u[1] + v[1] + f * dy];
            }
            let w = velocity_range::<true, true>(el.columns(), 0, hi, p);
            let scale = 1.0 + u[0].abs() + u[1].abs();
            assert!(
                (w[0] - u[0]).abs() < 1e-13 * scale && (w[1] - u[1]).abs() < 1e-13 * scale,
                "{hi}: {w:?} {u:?}"
            );
        }
    }

    #[test]
    fn gaussian_velocity_derives_from_stream_function() {
        let c = [0.1, -0.2];
        for p in [[0.12, -0.19], [0.3, 0.1], [-0.5, 0.4]] {
            let h = 1e-7;
            let u = (gaussian_stream_function(c, 0.8, 0.001, [p[0], p[1] + h])
                - gaussian_stream_function(c, 0.8, 0.001, [p[0], p[1] - h]))
                / (2.0 * h);
            let v = -(gaussian_stream_function(c, 0.8, 0.001, [p[0] + h, p[1]])
                - gaussian_stream_function(c, 0.8, 0.001, [p[0] - h, p[1]]))
                / (2.0 * h);
            let w = gaussian_velocity(c, 0.8, 0.001, p);
            assert!(
                (u - w[0]).abs() < 1e-6 && (v - w[1]).abs() < 1e-6,
                "{u} {v} {w:?}"
            );
        }
    }

    /// Uniform numbers in [0, 1) from a 64-bit linear congruential generator (Knuth's MMIX
    /// constants) seeded with `seed`: repeatable test data.
    fn uniform(mut s: u64) -> impl FnMut() -> f64 {
        move || {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (s >> 11) as f64 / (1u64 << 53) as f64
        }
    }

    #[test]
    fn shifts_match_the_binomial_sums() {
        // Moments (Greengard & Rokhlin 1987, lemma 2.2) and local expansions (an exact Taylor
        // shift) against the plain binomial sums, for an ordinary shift (scaled sums), a zero
        // shift and one so small that its powers leave the range of f64 (both unscaled).
        // Tolerance 1e-13 relative: a few hundred roundings of terms of like size.
        let order = 20;
        let t = tables(order, 1e-6);
        let mut rnd = uniform(4242);
        let child: Vec<C64> = (0..=order)
            .map(|k| C64::new(rnd() - 0.5, rnd() - 0.5) * 0.3f64.powi(k as i32))
            .collect();
        let binom = |n: usize, k: usize| -> f64 {
            (1..=k).fold(1.0, |c, i| c * (n + 1 - i) as f64 / i as f64)
        };
        let close = |a: &[C64], b: &[C64]| {
            let scale = b.iter().map(|z| z.norm()).fold(0.0, f64::max);
            let worst = a
                .iter()
                .zip(b)
                .map(|(x, y)| (x - y).norm())
                .fold(0.0, f64::max);
            assert!(
                worst <= 1e-13 * scale,
                "shift off by {worst:e} of {scale:e}"
            );
        };
        for d in [
            C64::new(0.21, -0.13),
            C64::new(0.0, 0.0),
            C64::new(1e-30, 2e-30),
        ] {
            let mut reference = vec![C64::new(0.0, 0.0); order + 1];
            for (n, r) in reference.iter_mut().enumerate() {
                for k in 0..=n {
                    *r += child[k] * d.powu((n - k) as u32) * binom(n, k);
                }
            }
            let mut out = vec![C64::new(0.0, 0.0); order + 1];
            let mut scratch = vec![C64::new(0.0, 0.0); order + 1];
            t.shift(&child, d, &mut scratch, &mut out);
            close(&out, &reference);
            // Local: q_j = sum_{l >= j} C(l, j) c_l d^(l - j); out gets j >= 1 only.
            let mut reference = vec![C64::new(0.0, 0.0); order + 1];
            for (j, r) in reference.iter_mut().enumerate().skip(1) {
                for l in j..=order {
                    *r += child[l] * d.powu((l - j) as u32) * binom(l, j);
                }
            }
            let mut out = vec![C64::new(0.0, 0.0); order + 1];
            t.shift_local(&child, d, &mut scratch, &mut out);
            close(&out, &reference);
        }
    }

    #[test]
    fn velocity_at_elements_matches_direct_sum() {
        // A rolled-up sheet with cores near the spacing, so shields are active in the near
        // pairs: one core for all (each near pair of leaves summed once for both) and mixed
        // cores (every near leaf summed one way). The tolerance is that of the other tree tests.
        let mut rnd = uniform(987);
        let mut one_core = Elements::default();
        let mut mixed = Elements::default();
        for k in 0..2500 {
            let t = k as f64 / 2500.0;
            let (r, a) = (0.05 + 0.4 * t, 30.0 * t);
            let p = [2.0 * t + r * a.cos(), r * a.sin() + 0.01 * rnd()];
            let g = rnd() - 0.3;
            one_core.push(p, g, 0.0, 4e-4);
            mixed.push(p, g, 0.0, 1e-4 + 8e-4 * rnd());
        }
        for el in [&one_core, &mixed] {
            let tree = Tree::new(el, 0.5, 1e-8);
            assert_eq!(tree.uniform_delta_sq.is_some(), std::ptr::eq(el, &one_core));
            let fast = tree.velocity_at_elements();
            let direct: Vec<[f64; 2]> = (0..el.len())
                .map(|k| el.direct([el.x[k], el.y[k]]).0)
                .collect();
            let scale = direct
                .iter()
                .map(|w| (w[0] * w[0] + w[1] * w[1]).sqrt())
                .fold(0.0, f64::max);
            let worst = fast
                .iter()
                .zip(&direct)
                .map(|(a, b)| ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt())
                .fold(0.0, f64::max);
            assert!(
                worst / scale < 1e-7,
                "velocity at elements {}",
                worst / scale
            );
        }
    }

    #[test]
    fn far_fields_in_the_local_expansions_match_direct_sums() {
        // The sheet of the test above as the tree, and two small clusters of blobs as far
        // fields, one among the sheet's last elements and one among its middle ones (most
        // leaves far from each, some next to it). Where a mask bit says a far
        // field was left out it is added directly, as the solver does; the total must match
        // the direct sum over all three sets to the tolerance of the other tree tests.
        let mut rnd = uniform(4242);
        let mut sheet = Elements::default();
        for k in 0..2500 {
            let t = k as f64 / 2500.0;
            let (r, a) = (0.05 + 0.4 * t, 30.0 * t);
            let p = [2.0 * t + r * a.cos(), r * a.sin() + 0.01 * rnd()];
            sheet.push(p, rnd() - 0.3, 0.0, 4e-4);
        }
        let tolerance = 1e-8;
        let tree = Tree::new(&sheet, 0.5, tolerance);
        let clusters: Vec<BlobGroup> = [2400, 1250]
            .iter()
            .map(|&at| {
                let c = [sheet.x[at], sheet.y[at]];
                let mut el = Elements::default();
                for _ in 0..12 {
                    let p = [c[0] + 0.02 * rnd(), c[1] + 0.02 * rnd()];
                    el.push(p, rnd() - 0.5, 0.0, 4e-4);
                }
                BlobGroup::new(el)
            })
            .collect();
        let moments: Vec<Vec<C64>> = clusters.iter().map(|g| g.moments(tree.order())).collect();
        let fields: Vec<FarField> = clusters
            .iter()
            .zip(&moments)
            .map(|(g, m)| g.far_field(m, tolerance))
            .collect();
        let (fast, masks) = tree.velocity_at_elements_with(&fields);
        let mut worst: f64 = 0.0;
        let mut scale: f64 = 0.0;
        let mut counts = [[0usize; 2]; 2];
        for k in 0..sheet.len() {
            let p = [sheet.x[k], sheet.y[k]];
            let mut w = fast[k];
            let mut d = sheet.direct(p).0;
            for (s, g) in clusters.iter().enumerate() {
                let v = g.elements.direct(p).0;
                d = [d[0] + v[0], d[1] + v[1]];
                let missed = masks[k] & (1 << s) != 0;
                counts[s][usize::from(missed)] += 1;
                if missed {
                    let v = g.velocity(p);
                    w = [w[0] + v[0], w[1] + v[1]];
                }
            }
            worst = worst.max(((w[0] - d[0]).powi(2) + (w[1] - d[1]).powi(2)).sqrt());
            scale = scale.max((d[0] * d[0] + d[1] * d[1]).sqrt());
        }
        assert!(
            worst / scale < 1e-7,
            "velocity with far fields {}",
            worst / scale
        );
        // Both paths were taken for both far fields.
        for (s, c) in counts.iter().enumerate() {
            assert!(
                c[0] > 100 && c[1] > 10,
                "far field {s}: included {} times, left out {}",
                c[0],
                c[1]
            );
        }
        // Moments of another order are refused: every bit set, and the tree's own sums.
        let short = [C64::new(0.0, 0.0); 3];
        let wrong = [FarField {
            moments: &short,
            ..fields[0]
        }];
        let (same, all) = tree.velocity_at_elements_with(&wrong);
        assert!(all.iter().all(|&m| m == 1));
        assert_eq!(same, tree.velocity_at_elements());
    }

    #[test]
    fn tree_matches_direct_sum() {
        let mut el = Elements::default();
        let mut rnd = uniform(12345);
        for _ in 0..3000 {
            let p = [4.0 * rnd(), 0.3 * rnd()];
            el.push(p, rnd() - 0.5, 0.0, 1e-6);
        }
        let tree = Tree::new(&el, 0.5, 1e-8);
        let mut worst: f64 = 0.0;
        let mut scale: f64 = 0.0;
        let mut worst_psi: f64 = 0.0;
        for k in (0..el.len()).step_by(7) {
            let p = [el.x[k], el.y[k]];
            let (wd, pd) = el.direct(p);
            let (wt, pt) = tree.eval(p);
            worst = worst.max(((wd[0] - wt[0]).powi(2) + (wd[1] - wt[1]).powi(2)).sqrt());
            scale = scale.max((wd[0] * wd[0] + wd[1] * wd[1]).sqrt());
            worst_psi = worst_psi.max((pd - pt).abs() / pd.abs().max(1e-3));
        }
        assert!(worst / scale < 1e-7, "velocity {}", worst / scale);
        assert!(worst_psi < 1e-6, "psi {worst_psi}");
        // All points at once (leaf-local expansions): the same tolerance, at the elements and
        // at points between and beside them.
        let mut pts: Vec<[f64; 2]> = (0..el.len())
            .step_by(3)
            .map(|k| [el.x[k], el.y[k]])
            .collect();
        for k in 0..400 {
            pts.push([
                -0.5 + 5.0 * k as f64 / 400.0,
                0.15 + 0.4 * ((k % 7) as f64 - 3.0) / 3.0,
            ]);
        }
        let many = tree.eval_points(&pts, true);
        let mut worst: f64 = 0.0;
        let mut worst_psi: f64 = 0.0;
        for (p, (wt, pt)) in pts.iter().zip(&many) {
            let (wd, pd) = el.direct(*p);
            worst = worst.max(((wd[0] - wt[0]).powi(2) + (wd[1] - wt[1]).powi(2)).sqrt());
            worst_psi = worst_psi.max((pd - pt).abs() / pd.abs().max(1e-3));
        }
        assert!(
            worst / scale < 1e-7,
            "velocity at many points {}",
            worst / scale
        );
        assert!(worst_psi < 1e-6, "psi at many points {worst_psi}");
        // Along a curve (a foil's outline): nodes with stream function, midpoints without.
        let nodes: Vec<[f64; 2]> = (0..=90)
            .map(|k| {
                let a = 2.0 * PI * k as f64 / 90.0;
                [1.5 + 0.3 * a.cos(), 0.15 + 0.05 * a.sin()]
            })
            .collect();
        let mids: Vec<[f64; 2]> = nodes
            .windows(2)
            .map(|w| [0.5 * (w[0][0] + w[1][0]), 0.5 * (w[0][1] + w[1][1])])
            .collect();
        let (at_nodes, at_mids) = tree.eval_outline(&nodes, &mids);
        assert_eq!((at_nodes.len(), at_mids.len()), (nodes.len(), mids.len()));
        for (p, (wt, pt)) in nodes.iter().zip(&at_nodes) {
            let (wd, pd) = el.direct(*p);
            let e = ((wd[0] - wt[0]).powi(2) + (wd[1] - wt[1]).powi(2)).sqrt() / scale;
            assert!(e < 1e-7, "outline node velocity {e}");
            assert!((pd - pt).abs() / pd.abs().max(1e-3) < 1e-6, "outline psi");
        }
        for (p, wt) in mids.iter().zip(&at_mids) {
            let (wd, _) = el.direct(*p);
            let e = ((wd[0] - wt[0]).powi(2) + (wd[1] - wt[1]).powi(2)).sqrt() / scale;
            assert!(e < 1e-7, "outline midpoint velocity {e}");
        }
        let fast_only = tree.eval_points(&pts, false);
        for ((w1, _), (w2, s2)) in many.iter().zip(&fast_only) {
            assert_eq!(w1, w2);
            assert_eq!(*s2, 0.0);
        }
    }
}
