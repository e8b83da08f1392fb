//! The colour of reflected and transmitted light: CIE XYZ, xy, L*a*b* and an sRGB swatch,
//! for the CIE 1931 2° and CIE 1964 10° observers under CIE illuminants D65 and A, and the
//! colour's path as the angle of incidence changes.
//!
//! # Recipe (CIE 015 practice)
//!
//! The tables are CIE 015's, 360–780 nm in 5 nm steps (`assets/cie/cie015_5nm.csv`, written
//! by `tools/extract_cie.py` from the CIE data as distributed in colour-science 0.4.7). The
//! coating is solved at exactly those 85 wavelengths; with S the illuminant and x̄ȳz̄ the
//! observer, k = 100 / Σ S ȳ and X, Y, Z = k Σ R S (x̄, ȳ, z̄) (the 5 nm interval cancels; no
//! weighting tables, no bandpass correction), so Y = 100 for the perfect diffuser.
//! x = X / (X + Y + Z), y = Y / (X + Y + Z). CIELAB (CIE 1976) uses the white of the same sum
//! with R ≡ 1 (the perfect reflecting diffuser under the same illuminant and observer), so a
//! flat spectrum is exactly neutral; f(t) = t^(1/3) above (6/29)³, else
//! t·(29/6)²/3 + 4/29.
//!
//! The sRGB swatch (IEC 61966-2-1) adapts the colour from the illuminant's white to D65 with
//! the Bradford transform, converts with the standard's published XYZ-to-sRGB matrix (white
//! D65 at (0.3127, 0.3290)), applies the sRGB transfer curve and clips to 0–1
//! ([`Srgb::in_gamut`] says whether clipping was needed).
//!
//! R and T are the means of s and p (unpolarised light).

use std::str::FromStr;
use std::sync::OnceLock;

use super::media::ViewError;
use super::{SweepError, Warning, spectrum};
use crate::design::ResolvedDesign;
use crate::optics::Side;

/// The embedded CIE table (see the module doc for its source).
const TABLE_CSV: &str = include_str!("../../assets/cie/cie015_5nm.csv");

/// First wavelength of the colour sums, nm.
pub const FIRST_NM: f64 = 360.0;
/// Wavelength step of the colour sums, nm.
pub const STEP_NM: f64 = 5.0;
/// Number of wavelengths in the colour sums (360–780 nm).
pub const SAMPLES: usize = 85;

/// A CIE standard colorimetric observer.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub enum Observer {
    /// CIE 1931 2° standard observer.
    #[default]
    Cie1931TwoDeg,
    /// CIE 1964 10° supplementary standard observer.
    Cie1964TenDeg,
}

/// A CIE standard illuminant.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub enum Illuminant {
    /// Daylight, 6504 K.
    #[default]
    D65,
    /// Incandescent (tungsten) light, 2856 K.
    A,
}

impl FromStr for Observer {
    type Err = ViewError;

    /// `2` or `10` (a trailing `°` or `deg` is accepted).
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let t = s
            .trim()
            .trim_end_matches("deg")
            .trim_end_matches('°')
            .trim();
        match t {
            "2" => Ok(Self::Cie1931TwoDeg),
            "10" => Ok(Self::Cie1964TenDeg),
            _ => Err(ViewError::UnknownObserver { given: s.into() }),
        }
    }
}

impl FromStr for Illuminant {
    type Err = ViewError;

    /// `D65` or `A`, in any case.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s.trim().to_ascii_uppercase().as_str() {
            "D65" => Ok(Self::D65),
            "A" => Ok(Self::A),
            _ => Err(ViewError::UnknownIlluminant { given: s.into() }),
        }
    }
}

/// One row of the table: (x̄2, ȳ2, z̄2, x̄10, ȳ10, z̄10, D65, A).
type Row = [f64; 8];

fn parse_table() -> Result<Vec<Row>, String> {
    let mut rows = Vec::with_capacity(SAMPLES);
    for line in TABLE_CSV.lines() {
        if line.starts_with('#') || line.starts_with("lambda") || line.trim().is_empty() {
            continue;
        }
        let nums = line
            .split(',')
            .map(|f| {
                f.trim()
                    .parse::<f64>()
                    .map_err(|e| format!("{line:?}: {e}"))
            })
            .collect::<Result<Vec<_>, _>>()?;
        let [wl, rest @ ..] = nums.as_slice() else {
            return Err("empty row".into());
        };
        let want = FIRST_NM + STEP_NM * rows.len() as f64;
        if (wl - want).abs() > 1e-9 {
            return Err(format!("row at {wl} nm where {want} nm was expected"));
        }
        let row: Row = rest
            .try_into()
            .map_err(|_| format!("row at {wl} nm has {} values, not 8", rest.len()))?;
        rows.push(row);
    }
    if rows.len() == SAMPLES {
        Ok(rows)
    } else {
        Err(format!("{} rows instead of {SAMPLES}", rows.len()))
    }
}

fn table() -> Result<&'static [Row], ViewError> {
    static TABLE: OnceLock<Result<Vec<Row>, String>> = OnceLock::new();
    TABLE
        .get_or_init(parse_table)
        .as_deref()
        .map_err(|e| ViewError::Table(e.clone()))
}

/// The wavelengths (nm) at which a spectrum must be given to [`tristimulus`]: 360–780 nm in
/// 5 nm steps.
#[must_use]
pub fn color_wavelengths_nm() -> Vec<f64> {
    (0..SAMPLES)
        .map(|i| FIRST_NM + STEP_NM * i as f64)
        .collect()
}

/// CIE XYZ tristimulus values on the 0–100 scale (Y = 100 for the perfect diffuser).
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Xyz {
    /// X.
    pub x: f64,
    /// Y (luminous reflectance or transmittance, percent).
    pub y: f64,
    /// Z.
    pub z: f64,
}

/// CIE 1976 L*a*b*.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Lab {
    /// Lightness L*.
    pub l: f64,
    /// a* (green − / red +).
    pub a: f64,
    /// b* (blue − / yellow +).
    pub b: f64,
}

/// An sRGB colour, each channel 0–1 after the transfer curve.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Srgb {
    /// Red, 0–1.
    pub r: f64,
    /// Green, 0–1.
    pub g: f64,
    /// Blue, 0–1.
    pub b: f64,
    /// Whether the colour was inside the sRGB gamut (else it was clipped).
    pub in_gamut: bool,
}

impl Srgb {
    /// As 8-bit channels, for a swatch.
    #[must_use]
    pub fn to_u8(&self) -> [u8; 3] {
        [self.r, self.g, self.b].map(|c| (c.clamp(0.0, 1.0) * 255.0).round() as u8)
    }
}

/// A colour in all the forms the views show.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Colour {
    /// Tristimulus values, 0–100.
    pub xyz: Xyz,
    /// Chromaticity (x, y); (0, 0) for black.
    pub xy: [f64; 2],
    /// CIELAB against the perfect diffuser under the same illuminant and observer.
    pub lab: Lab,
    /// The swatch.
    pub srgb: Srgb,
}

/// XYZ of `values` (fractions at [`color_wavelengths_nm`]) under `illuminant` for `observer`.
///
/// ```
/// use stackwise::analysis::color::{tristimulus, Illuminant, Observer, SAMPLES};
/// // Flat R = 0.04 under D65, 2°: (3.801860, 4.000000, 4.355881) (CIE 015 sum at 5 nm).
/// let xyz = tristimulus(&[0.04; SAMPLES], Illuminant::D65, Observer::Cie1931TwoDeg)?;
/// assert!((xyz.x - 3.801860).abs() < 1e-6 && (xyz.z - 4.355881).abs() < 1e-6);
/// # Ok::<(), stackwise::analysis::ViewError>(())
/// ```
pub fn tristimulus(
    values: &[f64],
    illuminant: Illuminant,
    observer: Observer,
) -> Result<Xyz, ViewError> {
    let rows = table()?;
    if values.len() != SAMPLES {
        return Err(ViewError::Table(format!(
            "a colour needs {SAMPLES} values (360–780 nm, 5 nm), got {}",
            values.len()
        )));
    }
    let off = match observer {
        Observer::Cie1931TwoDeg => 0,
        Observer::Cie1964TenDeg => 3,
    };
    let s_col = match illuminant {
        Illuminant::D65 => 6,
        Illuminant::A => 7,
    };
    let (mut x, mut y, mut z, mut norm) = (0.0, 0.0, 0.0, 0.0);
    for (row, &v) in rows.iter().zip(values) {
        let s = row[s_col];
        x += v * s * row[off];
        y += v * s * row[off + 1];
        z += v * s * row[off + 2];
        norm += s * row[off + 1];
    }
    let k = 100.0 / norm;
    Ok(Xyz {
        x: k * x,
        y: k * y,
        z: k * z,
    })
}

/// The perfect diffuser's XYZ under `illuminant` for `observer` (the CIELAB white).
pub fn white(illuminant: Illuminant, observer: Observer) -> Result<Xyz, ViewError> {
    tristimulus(&[1.0; SAMPLES], illuminant, observer)
}

/// Chromaticity (x, y) of `xyz`; (0, 0) for black.
#[must_use]
pub fn chromaticity(xyz: Xyz) -> [f64; 2] {
    let sum = xyz.x + xyz.y + xyz.z;
    if sum > 0.0 {
        [xyz.x / sum, xyz.y / sum]
    } else {
        [0.0, 0.0]
    }
}

/// CIE 1976 L*a*b* of `xyz` against the white `white`.
#[must_use]
pub fn lab(xyz: Xyz, white: Xyz) -> Lab {
    const E: f64 = 216.0 / 24389.0; // (6/29)³
    let f = |t: f64| {
        if t > E {
            t.cbrt()
        } else {
            t * (841.0 / 108.0) + 4.0 / 29.0
        }
    };
    let (fx, fy, fz) = (f(xyz.x / white.x), f(xyz.y / white.y), f(xyz.z / white.z));
    Lab {
        l: 116.0 * fy - 16.0,
        a: 500.0 * (fx - fy),
        b: 200.0 * (fy - fz),
    }
}

type M3 = [[f64; 3]; 3];

fn mul(m: &M3, v: [f64; 3]) -> [f64; 3] {
    std::array::from_fn(|i| m[i][0] * v[0] + m[i][1] * v[1] + m[i][2] * v[2])
}

fn mat_mul(a: &M3, b: &M3) -> M3 {
    std::array::from_fn(|i| std::array::from_fn(|j| (0..3).map(|k| a[i][k] * b[k][j]).sum()))
}

fn inverse(m: &M3) -> M3 {
    let c = |r: usize, s: usize| {
        let (r1, r2) = ((r + 1) % 3, (r + 2) % 3);
        let (s1, s2) = ((s + 1) % 3, (s + 2) % 3);
        m[r1][s1] * m[r2][s2] - m[r1][s2] * m[r2][s1]
    };
    let det = m[0][0] * c(0, 0) + m[0][1] * c(0, 1) + m[0][2] * c(0, 2);
    std::array::from_fn(|i| std::array::from_fn(|j| c(j, i) / det))
}

/// XYZ (Y = 1) of a chromaticity.
fn xy_to_xyz([x, y]: [f64; 2]) -> [f64; 3] {
    [x / y, 1.0, (1.0 - x - y) / y]
}

/// Linear sRGB from XYZ (Y = 1 scale), as published in IEC 61966-2-1:1999.
const SRGB_FROM_XYZ: M3 = [
    [3.2406, -1.5372, -0.4986],
    [-0.9689, 1.8758, 0.0415],
    [0.0557, -0.2040, 1.0570],
];

/// The Bradford cone-response matrix (Lam 1985, as in CIE 159 and ICC profiles).
const BRADFORD: M3 = [
    [0.8951, 0.2664, -0.1614],
    [-0.7502, 1.7135, 0.0367],
    [0.0389, -0.0685, 1.0296],
];

/// The sRGB swatch of `xyz` seen under an illuminant whose white is `white`.
#[must_use]
pub fn srgb(xyz: Xyz, white: Xyz) -> Srgb {
    let src = mul(&BRADFORD, [white.x, white.y, white.z].map(|v| v / white.y));
    let dst = mul(&BRADFORD, xy_to_xyz([0.3127, 0.3290]));
    let gain: M3 = std::array::from_fn(|i| {
        std::array::from_fn(|j| if i == j { dst[i] / src[i] } else { 0.0 })
    });
    let adapt = mat_mul(&inverse(&BRADFORD), &mat_mul(&gain, &BRADFORD));
    let lin = mul(
        &SRGB_FROM_XYZ,
        mul(&adapt, [xyz.x, xyz.y, xyz.z].map(|v| v / 100.0)),
    );
    let in_gamut = lin.iter().all(|c| (-1e-9..=1.0 + 1e-9).contains(c));
    let encode = |c: f64| {
        let c = c.clamp(0.0, 1.0);
        if c <= 0.003_130_8 {
            12.92 * c
        } else {
            1.055 * c.powf(1.0 / 2.4) - 0.055
        }
    };
    Srgb {
        r: encode(lin[0]),
        g: encode(lin[1]),
        b: encode(lin[2]),
        in_gamut,
    }
}

/// Every form of the colour of `values` (fractions at [`color_wavelengths_nm`]).
pub fn colour_of(
    values: &[f64],
    illuminant: Illuminant,
    observer: Observer,
) -> Result<Colour, ViewError> {
    let xyz = tristimulus(values, illuminant, observer)?;
    let w = white(illuminant, observer)?;
    Ok(Colour {
        xyz,
        xy: chromaticity(xyz),
        lab: lab(xyz, w),
        srgb: srgb(xyz, w),
    })
}

/// The colour of a design's reflected and transmitted light at one angle.
#[derive(Clone, Debug, PartialEq)]
pub struct DesignColour {
    /// Angle of incidence, degrees.
    pub aoi_deg: f64,
    /// Reflected light (R, mean of s and p).
    pub reflected: Colour,
    /// Transmitted light (T, mean of s and p).
    pub transmitted: Colour,
    /// Materials evaluated outside their data.
    pub warnings: Vec<Warning>,
}

/// The colour of `d` at `aoi_deg`, light from the front.
///
/// ```
/// use stackwise::analysis::color::{design_colour, Illuminant, Observer};
/// use stackwise::design::Design;
/// use stackwise::material::{Material, Model};
/// let mut d = Design::new_empty("bare");
/// d.substrate = "S".into();
/// d.materials = vec![Material::user("S", Model::Constant { n: 1.5, k: 0.0 })];
/// let c = design_colour(&d.resolve()?, 0.0, Illuminant::D65, Observer::Cie1931TwoDeg)?;
/// // R = 0.04 at every wavelength: Y = 4 and the colour is neutral.
/// assert!((c.reflected.xyz.y - 4.0).abs() < 1e-9 && c.reflected.lab.a.abs() < 1e-9);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn design_colour(
    d: &ResolvedDesign,
    aoi_deg: f64,
    illuminant: Illuminant,
    observer: Observer,
) -> Result<DesignColour, ViewError> {
    let s = spectrum(d, &color_wavelengths_nm(), aoi_deg, Side::Front)?;
    Ok(DesignColour {
        aoi_deg,
        reflected: colour_of(&s.curves.r, illuminant, observer)?,
        transmitted: colour_of(&s.curves.t, illuminant, observer)?,
        warnings: s.warnings,
    })
}

/// The colour's path as the angle of incidence changes: one entry per angle.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct ColourPath {
    /// Angles of incidence, degrees.
    pub aoi_deg: Vec<f64>,
    /// Reflected colour at each angle.
    pub reflected: Vec<Colour>,
    /// Transmitted colour at each angle.
    pub transmitted: Vec<Colour>,
    /// Materials evaluated outside their data.
    pub warnings: Vec<Warning>,
}

impl ColourPath {
    /// The reflected colour's (x, y) points, for a chromaticity plot.
    #[must_use]
    pub fn reflected_xy(&self) -> Vec<[f64; 2]> {
        self.reflected.iter().map(|c| c.xy).collect()
    }

    /// The transmitted colour's (x, y) points.
    #[must_use]
    pub fn transmitted_xy(&self) -> Vec<[f64; 2]> {
        self.transmitted.iter().map(|c| c.xy).collect()
    }
}

/// The colour of `d` at each of `aoi_deg` (e.g. 0–80° in steps of 5°).
pub fn colour_path(
    d: &ResolvedDesign,
    aoi_deg: &[f64],
    illuminant: Illuminant,
    observer: Observer,
) -> Result<ColourPath, ViewError> {
    if aoi_deg.is_empty() {
        return Err(SweepError::Inverted { from: 0.0, to: 0.0 }.into());
    }
    let mut path = ColourPath::default();
    for &a in aoi_deg {
        let c = design_colour(d, a, illuminant, observer)?;
        path.aoi_deg.push(a);
        path.reflected.push(c.reflected);
        path.transmitted.push(c.transmitted);
        if path.warnings.is_empty() {
            path.warnings = c.warnings;
        }
    }
    Ok(path)
}

/// Shortest wavelength of the drawn spectral locus, nm.
pub const LOCUS_FROM_NM: f64 = 380.0;
/// Longest wavelength of the drawn spectral locus, nm (beyond it the chromaticity barely
/// moves).
pub const LOCUS_TO_NM: f64 = 700.0;

/// The outline of the chromaticity diagram for `observer`: the (x, y) of each monochromatic
/// stimulus from [`LOCUS_FROM_NM`] to [`LOCUS_TO_NM`] in 5 nm steps (from the embedded CIE
/// table), closed by the line of purples back to the first point. Returns (wavelength nm,
/// [x, y]) pairs; the last pair repeats the first.
///
/// ```
/// use stackwise::analysis::color::{spectral_locus, Observer};
/// let locus = spectral_locus(Observer::Cie1931TwoDeg)?;
/// assert_eq!(locus.first(), locus.last());
/// # Ok::<(), stackwise::analysis::ViewError>(())
/// ```
pub fn spectral_locus(observer: Observer) -> Result<Vec<(f64, [f64; 2])>, ViewError> {
    let rows = table()?;
    let off = match observer {
        Observer::Cie1931TwoDeg => 0,
        Observer::Cie1964TenDeg => 3,
    };
    let mut out: Vec<(f64, [f64; 2])> = rows
        .iter()
        .enumerate()
        .map(|(i, row)| (FIRST_NM + STEP_NM * i as f64, row))
        .filter(|(wl, _)| (LOCUS_FROM_NM..=LOCUS_TO_NM).contains(wl))
        .map(|(wl, row)| {
            let xyz = Xyz {
                x: row[off],
                y: row[off + 1],
                z: row[off + 2],
            };
            (wl, chromaticity(xyz))
        })
        .collect();
    if let Some(&first) = out.first() {
        out.push(first);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Whether `p` lies inside the closed polygon `poly` (even-odd rule).
    fn inside(poly: &[[f64; 2]], p: [f64; 2]) -> bool {
        let mut c = false;
        for w in poly.windows(2) {
            let (a, b) = (w[0], w[1]);
            if (a[1] > p[1]) != (b[1] > p[1])
                && p[0] < a[0] + (p[1] - a[1]) * (b[0] - a[0]) / (b[1] - a[1])
            {
                c = !c;
            }
        }
        c
    }

    #[test]
    fn spectral_locus_matches_the_cie_table_and_encloses_the_white_points() {
        let two = spectral_locus(Observer::Cie1931TwoDeg).unwrap();
        assert_eq!(two.len(), 66, "380–700 nm in 5 nm steps, closed");
        assert_eq!(two.first(), two.last(), "closed by the line of purples");
        // 520 nm, CIE 1931 2°: x̄ 0.06327, ȳ 0.71, z̄ 0.07824999 (CIE 015 table,
        // reference/colorimetry.md §5.5) → x = 0.074302, y = 0.833803.
        let (_, at520) = two
            .iter()
            .find(|(wl, _)| (*wl - 520.0).abs() < 1e-9)
            .unwrap();
        assert!((at520[0] - 0.074_302).abs() < 1e-6, "{at520:?}");
        assert!((at520[1] - 0.833_803).abs() < 1e-6, "{at520:?}");
        // The red end of the 2° locus is near (0.7347, 0.2653) (CIE 015, from memory).
        let (_, red) = two[two.len() - 2];
        assert!(
            (red[0] - 0.7347).abs() < 2e-3 && (red[1] - 0.2653).abs() < 2e-3,
            "{red:?}"
        );
        for observer in [Observer::Cie1931TwoDeg, Observer::Cie1964TenDeg] {
            let outline: Vec<[f64; 2]> = spectral_locus(observer)
                .unwrap()
                .into_iter()
                .map(|p| p.1)
                .collect();
            for illuminant in [Illuminant::D65, Illuminant::A] {
                let w = chromaticity(white(illuminant, observer).unwrap());
                assert!(
                    inside(&outline, w),
                    "{illuminant:?} {observer:?} white {w:?}"
                );
            }
            assert!(!inside(&outline, [0.7, 0.7]), "outside the horseshoe");
            assert!(
                outline
                    .iter()
                    .all(|p| p.iter().all(|v| (0.0..=1.0).contains(v))),
                "chromaticities lie in 0–1"
            );
        }
    }
}
