//! The physics: reflection, transmission and absorption of a layer stack, by the
//! characteristic-matrix method. Pure functions of numbers; nothing here knows about files,
//! designs, threads or screens.
//!
//! # Conventions (used everywhere in the program)
//!
//! * **Complex index** N = n + i k with k >= 0 for an absorbing medium, as users type it.
//!   Fields vary as exp(i(k·z − ω t)), so a wave travelling towards +z decays when Im(N) > 0.
//!   (The other convention, N = n − i k with exp(i(ω t − k z)), conjugates r and t and leaves
//!   R, T and A unchanged.)
//! * **Snell invariant** S = n₀ sin θ₀ of the medium the light comes from; in every medium
//!   the tilted quantity q = N cos θ = √(N² − S²), with the branch chosen so the wave decays
//!   away from the interface (Im q > 0), or, if q is real, propagates away (Re q > 0). That
//!   choice makes total internal reflection and frustrated TIR come out right.
//! * **Tilted admittances**, in units of the free-space admittance: η_s = N cos θ = q and
//!   η_p = N / cos θ = N² / q.
//! * **Layer matrix** of a layer of thickness d at vacuum wavelength λ, with phase
//!   δ = 2π q d / λ: `[[cos δ, −i sin δ / η], [−i η sin δ, cos δ]]` (unimodular).
//! * **Order.** Layers are numbered in deposition order: layer 1 sits on the substrate, the
//!   last layer faces the incident medium. The stack's [B; C] = M_last · … · M_1 · [1; η_sub].
//! * **Results.** With Y = C / B: r = (η₀B − C)/(η₀B + C) (so r_p = r_s at normal incidence),
//!   R = |r|², T = 4 Re(η₀) Re(η_sub)/|η₀B + C|², A = 4 Re(η₀) Re(B C* − η_sub)/|η₀B + C|².
//!   R, T, A are fractions 0..1 that sum to 1. The amplitude t is the ratio of electric
//!   fields: t_s = 2η₀/(η₀B + C), and t_p the same times cos θ₀ / cos θ_sub.
//! * **Incident medium.** It must be transparent; its k is ignored (only Re N enters η₀).
//! * **Thick substrate.** A substrate with a thickness is incoherent: each of its faces (the
//!   coating, and the back face — bare or with its own coating) is solved coherently from
//!   outside and from inside, and the two are combined by intensity with the substrate's
//!   absorption exp(−4π Im(q) d / λ) over the oblique path (see [`thick`]). The substrate
//!   keeps its complex index N throughout: as the exit medium of the problems solved from
//!   outside, and as the (absorbing) incident medium of those solved from inside, where
//!   r = (η₀B − C)/(η₀B + C) with the complex η₀ and T = |t_tan|² Re(η_exit)/Re(η₀) with
//!   t_tan = 2η₀/(η₀B + C), both polarisations (for p that is the flux Re(N cos θ*) of the
//!   incoherent-layer method). A semi-infinite substrate that the light starts in (light from
//!   the back with no thickness) counts with its real index.
//! * **Back face.** Its coating is listed like the front one, from the substrate outward
//!   (layer 1 touches the substrate). Light from the back meets the back face first.

pub mod field;
pub mod gradient;
mod gradient4;
mod lanes;
mod simd;
pub mod thick;
mod tmm;

/// A small xorshift generator for the solver's tests: reproducible random stacks without a
/// dependency.
#[cfg(test)]
pub(crate) mod test_rng {
    pub(crate) struct Rng(pub(crate) u64);

    impl Rng {
        pub(crate) fn next(&mut self) -> f64 {
            self.0 ^= self.0 << 13;
            self.0 ^= self.0 >> 7;
            self.0 ^= self.0 << 17;
            (self.0 >> 11) as f64 / (1u64 << 53) as f64
        }

        pub(crate) fn range(&mut self, lo: f64, hi: f64) -> f64 {
            lo + (hi - lo) * self.next()
        }
    }
}

pub use gradient::{Gradient, GradientScratch, solve_gradient};
pub use gradient4::{GradientScratch4, solve_gradient4};
pub use thick::{Face, combine};
pub use tmm::{Amplitudes, Coherent, Tilted, coherent};

use num_complex::Complex64;

/// Which side the light arrives from.
#[derive(
    Clone, Copy, Debug, PartialEq, Eq, Hash, Default, serde::Serialize, serde::Deserialize,
)]
pub enum Side {
    /// From the incident medium onto the coating (the usual case).
    #[default]
    Front,
    /// From the exit medium, through the substrate, onto the coating from behind (with a
    /// semi-infinite substrate: from inside the substrate).
    Back,
}

/// Everything the solver needs about one stack at one wavelength: complex indices of the
/// media and of each distinct layer material, and the layers as (material index, nm).
#[derive(Clone, Copy, Debug)]
pub struct StackAt<'a> {
    /// Index of the incident medium (in front of the coating).
    pub incident: Complex64,
    /// Index of the substrate.
    pub substrate: Complex64,
    /// Index of the exit medium behind a thick substrate (unused for a semi-infinite one).
    pub exit: Complex64,
    /// Index of each distinct layer material.
    pub materials: &'a [Complex64],
    /// Layers in deposition order (layer 1, on the substrate, first): (material, nm).
    pub layers: &'a [(usize, f64)],
    /// The coating on the substrate's back face, layer 1 (on the substrate) first; empty for
    /// a bare back face. Counts only with a thick substrate.
    pub back_layers: &'a [(usize, f64)],
    /// Substrate thickness in mm; `None` for a semi-infinite substrate.
    pub substrate_mm: Option<f64>,
}

/// The response of a stack at one wavelength and angle, both polarisations.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Response {
    /// Reflectance, s-polarised (fraction).
    pub r_s: f64,
    /// Reflectance, p-polarised.
    pub r_p: f64,
    /// Transmittance, s-polarised.
    pub t_s: f64,
    /// Transmittance, p-polarised.
    pub t_p: f64,
    /// Absorptance, s-polarised.
    pub a_s: f64,
    /// Absorptance, p-polarised.
    pub a_p: f64,
    /// Complex reflection amplitude of the coating, s (for thick substrates: the coating on
    /// its own, from the side the light arrives at).
    pub amp_r_s: Complex64,
    /// Complex reflection amplitude of the coating, p (admittance sign convention).
    pub amp_r_p: Complex64,
    /// Complex transmission amplitude of the coating, s.
    pub amp_t_s: Complex64,
    /// Complex transmission amplitude of the coating, p.
    pub amp_t_p: Complex64,
}

impl Response {
    /// Mean reflectance of s and p (unpolarised light).
    #[must_use]
    pub fn r(&self) -> f64 {
        0.5 * (self.r_s + self.r_p)
    }

    /// Mean transmittance of s and p.
    #[must_use]
    pub fn t(&self) -> f64 {
        0.5 * (self.t_s + self.t_p)
    }

    /// Mean absorptance of s and p.
    #[must_use]
    pub fn a(&self) -> f64 {
        0.5 * (self.a_s + self.a_p)
    }
}

/// The media of the coherent problems one point needs, for one Snell invariant: each is
/// (incident medium, exit medium) of one coherent sub-problem. Only the problems the point
/// needs are tilted (the others hold a placeholder).
#[derive(Clone, Copy, Debug)]
struct Setup {
    snell: f64,
    /// The coating seen from the incident medium (light from the front).
    front_out: (Tilted, Tilted),
    /// The coating seen from inside the substrate (light from the back, and every thick
    /// substrate).
    front_in: (Tilted, Tilted),
    /// The back face seen from inside the substrate (thick substrates).
    back_in: (Tilted, Tilted),
    /// The back face seen from the exit medium (thick substrates, light from the back).
    back_out: (Tilted, Tilted),
    /// Which of the four problems this point needs, in the order above.
    need: [bool; 4],
}

impl Setup {
    fn new(stack: &StackAt<'_>, aoi_rad: f64, side: Side) -> Self {
        let blank = Tilted::new(Complex64::ONE, 0.0);
        let mut setup = Self {
            snell: 0.0,
            front_out: (blank, blank),
            front_in: (blank, blank),
            back_in: (blank, blank),
            back_out: (blank, blank),
            need: [false; 4],
        };
        setup.refill(stack, aoi_rad, side);
        setup
    }

    /// [`Setup::new`] in place: only the problems the point needs are tilted and written (the
    /// others keep whatever they held, and are never read).
    fn refill(&mut self, stack: &StackAt<'_>, aoi_rad: f64, side: Side) {
        let real = |n: Complex64| Complex64::new(n.re, 0.0);
        // The medium the light starts in fixes the Snell invariant.
        let from = match (side, stack.substrate_mm) {
            (Side::Front, _) => stack.incident,
            (Side::Back, Some(_)) => stack.exit,
            (Side::Back, None) => stack.substrate,
        };
        let snell = from.re * aoi_rad.sin();
        let thick = stack.substrate_mm.is_some();
        let need = [
            side == Side::Front,
            side == Side::Back || thick,
            thick,
            thick && side == Side::Back,
        ];
        let tilt = |n: Complex64| Tilted::new(n, snell);
        let sub = tilt(stack.substrate);
        self.snell = snell;
        self.need = need;
        if need[0] {
            self.front_out = (tilt(real(stack.incident)), sub);
        }
        if need[1] {
            // A thick substrate keeps its complex index in every sub-problem; a semi-infinite
            // one that the light starts in counts as transparent.
            let inside = if thick || stack.substrate.im == 0.0 {
                sub
            } else {
                tilt(real(stack.substrate))
            };
            self.front_in = (inside, tilt(stack.incident));
        }
        if need[2] {
            self.back_in = (sub, tilt(stack.exit));
        }
        if need[3] {
            self.back_out = (tilt(real(stack.exit)), sub);
        }
    }

    /// Combines the coherent results (in the order of `need`) with the substrate into the
    /// response.
    fn assemble(
        &self,
        stack: &StackAt<'_>,
        wavelength_nm: f64,
        side: Side,
        solved: [Option<&Coherent>; 4],
    ) -> Response {
        let [front_out, front_in, back_in, back_out] =
            solved.map(|c| c.copied().unwrap_or_default());
        let Some(substrate_mm) = stack.substrate_mm else {
            return match side {
                Side::Front => front_out.response(),
                Side::Back => front_in.response(),
            };
        };
        let internal =
            thick::internal_transmittance(self.back_in.0.q, substrate_mm * 1e6, wavelength_nm);
        let lossless = stack.substrate.im == 0.0;
        let faces = |outside: &Coherent, inside: &Coherent| {
            [
                Face::new(&outside.s, &inside.s, lossless),
                Face::new(&outside.p, &inside.p, lossless),
            ]
        };
        let (coating, first, second) = match side {
            Side::Front => (
                front_out,
                faces(&front_out, &front_in),
                faces(&back_out, &back_in),
            ),
            Side::Back => (
                front_in,
                faces(&back_out, &back_in),
                faces(&front_out, &front_in),
            ),
        };
        let (r_s, t_s, a_s) = thick::combine(&first[0], &second[0], internal);
        let (r_p, t_p, a_p) = thick::combine(&first[1], &second[1], internal);
        Response {
            r_s,
            r_p,
            t_s,
            t_p,
            a_s,
            a_p,
            amp_r_s: coating.s.r,
            amp_r_p: coating.p.r,
            amp_t_s: coating.s.t,
            amp_t_p: coating.p.t,
        }
    }
}

/// Solves one stack at one wavelength and angle of incidence (radians, in the medium the light
/// arrives from). `scratch` is reused between calls so the hot loop does not allocate.
///
/// ```
/// use num_complex::Complex64;
/// use stackwise::optics::{solve, Side, StackAt};
/// let glass = Complex64::new(1.52, 0.0);
/// let stack = StackAt {
///     incident: Complex64::new(1.0, 0.0), substrate: glass, exit: Complex64::new(1.0, 0.0),
///     materials: &[Complex64::new(1.38, 0.0)], layers: &[(0, 550.0 / (4.0 * 1.38))],
///     back_layers: &[], substrate_mm: None,
/// };
/// let r = solve(&stack, 550.0, 0.0, Side::Front, &mut Vec::new());
/// // Single quarter-wave layer: R = ((n0 ns − n1²)/(n0 ns + n1²))² (Macleod, ch. 3)
/// assert!((r.r() - 0.012600790215).abs() < 1e-10);
/// ```
pub fn solve(
    stack: &StackAt<'_>,
    wavelength_nm: f64,
    aoi_rad: f64,
    side: Side,
    scratch: &mut Vec<Tilted>,
) -> Response {
    let setup = Setup::new(stack, aoi_rad, side);
    scratch.clear();
    scratch.extend(stack.materials.iter().map(|&n| Tilted::new(n, setup.snell)));
    let mats: &[Tilted] = scratch;
    let problems = [
        (&setup.front_out, Order::Deposition, stack.layers),
        (&setup.front_in, Order::Reversed, stack.layers),
        (&setup.back_in, Order::Reversed, stack.back_layers),
        (&setup.back_out, Order::Deposition, stack.back_layers),
    ];
    let solved = std::array::from_fn(|i| {
        let ((inc, exit), order, layers) = problems[i];
        setup.need[i].then(|| {
            let layers = layers.iter().map(|&(m, d)| (&mats[m], d));
            match order {
                Order::Deposition => coherent(inc, layers, exit, wavelength_nm),
                Order::Reversed => coherent(inc, layers.rev(), exit, wavelength_nm),
            }
        })
    });
    setup.assemble(
        stack,
        wavelength_nm,
        side,
        solved.each_ref().map(Option::as_ref),
    )
}

/// The order a coherent sub-problem takes a face's layers in: its loop starts at the layer
/// touching the sub-problem's exit medium.
#[derive(Clone, Copy)]
enum Order {
    /// Layer 1 (on the substrate) first: the substrate is the exit medium.
    Deposition,
    /// The outermost layer first: the substrate is the incident medium.
    Reversed,
}

/// One coherent sub-problem of [`solve4`]: how to pick its (incident, exit) media from a
/// [`Setup`], the order of its layers, and the layers.
type Problem<'a> = (fn(&Setup) -> &(Tilted, Tilted), Order, &'a [(usize, f64)]);

/// The media of four points tilted for their angles: everything [`solve4`] computes before
/// its layer loop. It depends on the indices, the angles and the side, not on the layers, so
/// a caller that solves the same points for many thicknesses (the optimiser) builds it once
/// and calls [`solve4_with`] and [`solve_gradient4`].
#[derive(Clone, Debug)]
pub struct Media4 {
    side: Side,
    setups: [Setup; 4],
    /// Each layer material in four lanes.
    packed: Vec<lanes::Tilted4>,
    /// Light from the front onto a semi-infinite substrate: the ends in lanes, so
    /// [`solve4_with`] runs in lanes from start to end.
    front: Option<lanes::FrontEnds4>,
}

impl Media4 {
    /// Tilts the media of `stacks` (which must share their number of materials) for the
    /// angles `aoi_rad` (radians, in the medium the light arrives from).
    #[must_use]
    pub fn new(stacks: [&StackAt<'_>; 4], aoi_rad: [f64; 4], side: Side) -> Self {
        let mut media = Self {
            side,
            setups: std::array::from_fn(|i| Setup::new(stacks[i], aoi_rad[i], side)),
            packed: Vec::new(),
            front: None,
        };
        media.tilt_materials(stacks);
        media
    }

    /// [`Media4::new`] into existing buffers.
    fn refill(&mut self, stacks: [&StackAt<'_>; 4], aoi_rad: [f64; 4], side: Side) {
        self.side = side;
        for (i, setup) in self.setups.iter_mut().enumerate() {
            setup.refill(stacks[i], aoi_rad[i], side);
        }
        self.tilt_materials(stacks);
    }

    fn tilt_materials(&mut self, stacks: [&StackAt<'_>; 4]) {
        self.front = (self.side == Side::Front && stacks[0].substrate_mm.is_none()).then(|| {
            lanes::FrontEnds4::new(
                stacks.map(|s| s.incident),
                stacks.map(|s| s.substrate),
                simd::F4(self.setups.each_ref().map(|s| s.snell)),
            )
        });
        let setups = &self.setups;
        self.packed.clear();
        let snell = setups.each_ref().map(|s| s.snell);
        self.packed.extend(
            (0..stacks[0].materials.len()).map(|m| {
                lanes::Tilted4::new(std::array::from_fn(|i| stacks[i].materials[m]), snell)
            }),
        );
    }
}

/// Reusable buffers for [`solve4`].
#[derive(Debug, Default)]
pub struct Scratch4 {
    media: Option<Media4>,
    /// The layer materials tilted in lanes (light from the front, semi-infinite substrate).
    packed: Vec<lanes::Tilted4>,
    /// The last angles (their bits) and their sines: a sweep over wavelengths asks for the
    /// same angles every time.
    sines: Option<([u64; 4], [f64; 4])>,
}

/// The most common sweep: light from the front onto a coating on a semi-infinite substrate at
/// a run of wavelengths and one angle, with each medium's index given per wavelength.
#[derive(Clone, Copy, Debug)]
pub struct FrontRun<'a> {
    /// Vacuum wavelength of each point (nm).
    pub wavelength_nm: &'a [f64],
    /// Angle of incidence in the incident medium (radians), the same for every point.
    pub aoi_rad: f64,
    /// The incident medium's index at each point (its real part counts: it is transparent).
    pub incident: &'a [Complex64],
    /// The substrate's index at each point.
    pub substrate: &'a [Complex64],
    /// The layer materials' indices, one column per material, each as long as
    /// `wavelength_nm`: material `m` at point `i` is `materials[m * points + i]`.
    pub materials: &'a [Complex64],
    /// Layers in deposition order (layer 1, on the substrate, first): (material, nm).
    pub layers: &'a [(usize, f64)],
}

/// Result columns to write into, one slot per point: R, T and A for s, p and their mean, and
/// the coating's complex amplitudes (the fields of [`Response`], column by column).
#[derive(Debug)]
#[allow(
    missing_docs,
    reason = "each column is the Response field of the same name"
)]
pub struct ColumnsMut<'a> {
    pub r_s: &'a mut [f64],
    pub r_p: &'a mut [f64],
    pub r: &'a mut [f64],
    pub t_s: &'a mut [f64],
    pub t_p: &'a mut [f64],
    pub t: &'a mut [f64],
    pub a_s: &'a mut [f64],
    pub a_p: &'a mut [f64],
    pub a: &'a mut [f64],
    pub amp_r_s: &'a mut [Complex64],
    pub amp_r_p: &'a mut [Complex64],
    pub amp_t_s: &'a mut [Complex64],
    pub amp_t_p: &'a mut [Complex64],
}

impl ColumnsMut<'_> {
    /// Number of slots (the shortest column).
    #[must_use]
    pub fn len(&self) -> usize {
        [
            self.r_s.len(),
            self.r_p.len(),
            self.r.len(),
            self.t_s.len(),
            self.t_p.len(),
            self.t.len(),
            self.a_s.len(),
            self.a_p.len(),
            self.a.len(),
            self.amp_r_s.len(),
            self.amp_r_p.len(),
            self.amp_t_s.len(),
            self.amp_t_p.len(),
        ]
        .into_iter()
        .min()
        .unwrap_or(0)
    }

    /// Whether there are no slots.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The first `mid` slots and the rest, as two sets of columns.
    ///
    /// # Panics
    /// If `mid` is past the end of a column.
    #[must_use]
    pub fn split_at(self, mid: usize) -> (Self, Self) {
        macro_rules! split {
            ($($column:ident),*) => {{
                $(let $column = self.$column.split_at_mut(mid);)*
                (Self { $($column: $column.0,)* }, Self { $($column: $column.1,)* })
            }};
        }
        split!(
            r_s, r_p, r, t_s, t_p, t, a_s, a_p, a, amp_r_s, amp_r_p, amp_t_s, amp_t_p
        )
    }

    /// The point at slot `i`, gathered from the columns.
    #[must_use]
    pub fn response(&self, i: usize) -> Response {
        Response {
            r_s: self.r_s[i],
            r_p: self.r_p[i],
            t_s: self.t_s[i],
            t_p: self.t_p[i],
            a_s: self.a_s[i],
            a_p: self.a_p[i],
            amp_r_s: self.amp_r_s[i],
            amp_r_p: self.amp_r_p[i],
            amp_t_s: self.amp_t_s[i],
            amp_t_p: self.amp_t_p[i],
        }
    }
}

/// Solves a [`FrontRun`] four points at a time in SIMD lanes, writing each point's results
/// into `out` at its own slot: the same numbers as [`solve4`] for each point (the lanes are
/// the same), with no per-point structures in between.
///
/// # Panics
/// If the run's columns or `out`'s differ in length from `wavelength_nm`, or a layer names a
/// material the run has no column for (a programming error, not bad input).
pub fn solve_front_run(run: &FrontRun<'_>, out: &mut ColumnsMut<'_>, scratch: &mut Scratch4) {
    let points = run.wavelength_nm.len();
    assert!(
        run.incident.len() == points && run.substrate.len() == points && out.len() == points,
        "a front run's columns differ in length"
    );
    if points == 0 {
        return;
    }
    assert!(
        run.materials.len().is_multiple_of(points),
        "a front run's material columns are not whole"
    );
    let count = run.materials.len() / points;
    assert!(
        run.layers.iter().all(|&(m, _)| m < count),
        "a layer names a material with no column"
    );
    simd::run_at(
        simd::Level::best(),
        lanes::FrontRun4 {
            run,
            sin_aoi: run.aoi_rad.sin(),
            out,
            packed: &mut scratch.packed,
        },
    );
}

/// [`solve`] for four points at once in SIMD lanes — four wavelengths of a spectrum or four
/// angles of a scan. The four stacks must share `layers`, `back_layers` and whether the
/// substrate is thick (the same design); their indices,
/// wavelengths and angles may differ. Agrees with [`solve`] to rounding.
pub fn solve4(
    stacks: [&StackAt<'_>; 4],
    wavelength_nm: [f64; 4],
    aoi_rad: [f64; 4],
    side: Side,
    scratch: &mut Scratch4,
) -> [Response; 4] {
    if side == Side::Front && stacks[0].substrate_mm.is_none() {
        // The common case, in lanes from start to end.
        let key = aoi_rad.map(f64::to_bits);
        let sin_aoi = match scratch.sines {
            Some((k, sines)) if k == key => sines,
            _ => {
                let sines = aoi_rad.map(f64::sin);
                scratch.sines = Some((key, sines));
                sines
            }
        };
        let front = lanes::Front4 {
            incident: stacks.map(|s| s.incident),
            substrate: stacks.map(|s| s.substrate),
            materials: stacks.map(|s| s.materials),
            layers: stacks[0].layers,
            sin_aoi,
            wavelength_nm,
            packed: &mut scratch.packed,
        };
        return simd::run_at(simd::Level::best(), front);
    }
    let media = match &mut scratch.media {
        Some(media) => {
            media.refill(stacks, aoi_rad, side);
            media
        }
        None => scratch.media.insert(Media4::new(stacks, aoi_rad, side)),
    };
    solve4_with(media, stacks, wavelength_nm)
}

/// [`solve4`] with the media tilted beforehand: `media` from [`Media4::new`] with these
/// stacks' indices (the layers may change between calls).
#[must_use]
pub fn solve4_with(
    media: &Media4,
    stacks: [&StackAt<'_>; 4],
    wavelength_nm: [f64; 4],
) -> [Response; 4] {
    let (setups, side) = (&media.setups, media.side);
    let mats: &[lanes::Tilted4] = &media.packed;
    let layers = stacks[0].layers;
    if let Some(ends) = &media.front {
        let front = lanes::FrontWith {
            packed: mats,
            ends,
            layers,
            wavelength_nm,
        };
        return simd::run_at(simd::Level::best(), front);
    }
    let problems: [Problem<'_>; 4] = [
        (|s| &s.front_out, Order::Deposition, layers),
        (|s| &s.front_in, Order::Reversed, layers),
        (|s| &s.back_in, Order::Reversed, stacks[0].back_layers),
        (|s| &s.back_out, Order::Deposition, stacks[0].back_layers),
    ];
    let solved: [Option<[Coherent; 4]>; 4] = std::array::from_fn(|i| {
        let (pick, order, layers) = problems[i];
        setups[0].need[i].then(|| {
            let inc = setups.each_ref().map(|s| &pick(s).0);
            let exit = setups.each_ref().map(|s| &pick(s).1);
            let layers = layers.iter().map(|&(k, d)| (&mats[k], d));
            match order {
                Order::Deposition => lanes::coherent4(inc, layers, exit, wavelength_nm),
                Order::Reversed => lanes::coherent4(inc, layers.rev(), exit, wavelength_nm),
            }
        })
    });
    std::array::from_fn(|i| {
        setups[i].assemble(
            stacks[i],
            wavelength_nm[i],
            side,
            solved.each_ref().map(|p| p.as_ref().map(|four| &four[i])),
        )
    })
}
