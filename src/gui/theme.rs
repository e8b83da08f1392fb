//! Colours used by the window, in one place.

use egui::Color32;

/// Refractive index at the low end of the colour ramp.
pub const N_LOW: f64 = 1.3;
/// Refractive index at the high end of the colour ramp.
pub const N_HIGH: f64 = 2.6;

/// Control points of a perceptually ordered ramp (dark blue → teal → green → yellow), evenly
/// spaced; lightness rises monotonically so a low index reads as dark and a high one as light.
const RAMP: [[u8; 3]; 7] = [
    [52, 40, 110],
    [56, 82, 140],
    [40, 122, 142],
    [35, 158, 130],
    [88, 190, 100],
    [170, 214, 62],
    [246, 230, 60],
];

/// Colour of a metal (k > n at the reference wavelength).
pub const METAL: Color32 = Color32::from_rgb(168, 170, 176);
/// Colour of a material whose index cannot be evaluated.
pub const UNKNOWN: Color32 = Color32::from_rgb(200, 60, 60);
/// Colour of the reflectance curves.
pub const R: Color32 = Color32::from_rgb(220, 80, 60);
/// Colour of the transmittance curves.
pub const T: Color32 = Color32::from_rgb(60, 120, 220);
/// Colour of the absorptance curves.
pub const A: Color32 = Color32::from_rgb(90, 170, 80);

/// Colours that tell open designs apart: [`crate::export::palette::DESIGN_COLOURS`], the
/// same ones exported images use, in the same order. A design keeps its colour while open.
pub const DESIGN_PALETTE: [Color32; 7] = {
    let c = crate::export::palette::DESIGN_COLOURS;
    let mut out = [Color32::BLACK; 7];
    let mut i = 0;
    while i < out.len() {
        out[i] = Color32::from_rgb(c[i].0, c[i].1, c[i].2);
        i += 1;
    }
    out
};

/// The design-palette slot of a design colour (for exporting it in the same colour); 0 for
/// a colour outside the palette.
#[must_use]
pub fn design_slot(colour: Color32) -> usize {
    crate::export::palette::slot_of((colour.r(), colour.g(), colour.b())).unwrap_or(0)
}

/// The first palette colour not in `taken` (the colours of the designs already open); when
/// all are taken, the colours repeat in order.
#[must_use]
pub fn next_design_colour(taken: &[Color32]) -> Color32 {
    DESIGN_PALETTE
        .iter()
        .copied()
        .find(|c| !taken.contains(c))
        .unwrap_or(DESIGN_PALETTE[taken.len() % DESIGN_PALETTE.len()])
}

/// A curve colour for one polarisation: s lighter, p deeper, the mean as it is, so the
/// legend tells them apart by colour as well as by line style.
#[must_use]
pub fn pol_shade(base: Color32, pol: &str) -> Color32 {
    let mix = |c: u8, to: f32, f: f32| (f32::from(c) + (to - f32::from(c)) * f).round() as u8;
    let (to, f) = match pol {
        "s" => (255.0, 0.45),
        "p" => (0.0, 0.35),
        _ => return base,
    };
    Color32::from_rgb(
        mix(base.r(), to, f),
        mix(base.g(), to, f),
        mix(base.b(), to, f),
    )
}

/// The ramp colour for refractive index `n` (clamped to [`N_LOW`], [`N_HIGH`]).
#[must_use]
pub fn index_colour(n: f64) -> Color32 {
    let t = if n.is_finite() {
        ((n - N_LOW) / (N_HIGH - N_LOW)).clamp(0.0, 1.0)
    } else {
        0.0
    };
    let x = t * (RAMP.len() - 1) as f64;
    let i = (x.floor() as usize).min(RAMP.len() - 2);
    let f = x - i as f64;
    let mix = |c: usize| {
        let a = f64::from(RAMP[i][c]);
        let b = f64::from(RAMP[i + 1][c]);
        (a + (b - a) * f).round().clamp(0.0, 255.0) as u8
    };
    Color32::from_rgb(mix(0), mix(1), mix(2))
}

/// The colour for a material with complex index n + ik at the reference wavelength.
#[must_use]
pub fn material_colour(n: f64, k: f64) -> Color32 {
    if k > n { METAL } else { index_colour(n) }
}

/// Black or white, whichever reads better on `bg`.
#[must_use]
pub fn text_on(bg: Color32) -> Color32 {
    let l = 0.299 * f32::from(bg.r()) + 0.587 * f32::from(bg.g()) + 0.114 * f32::from(bg.b());
    if l > 140.0 {
        Color32::BLACK
    } else {
        Color32::WHITE
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn luma(c: Color32) -> f32 {
        0.299 * f32::from(c.r()) + 0.587 * f32::from(c.g()) + 0.114 * f32::from(c.b())
    }

    #[test]
    fn ramp_gets_lighter_with_index_and_clamps() {
        let mut last = -1.0;
        for i in 0..=26 {
            let l = luma(index_colour(1.3 + 0.05 * f64::from(i)));
            assert!(l > last, "lightness rises at step {i}: {l} after {last}");
            last = l;
        }
        assert_eq!(index_colour(0.5), index_colour(N_LOW), "clamped low");
        assert_eq!(index_colour(9.0), index_colour(N_HIGH), "clamped high");
        assert_eq!(index_colour(f64::NAN), index_colour(N_LOW), "NaN is safe");
        assert_eq!(material_colour(0.1, 3.0), METAL, "metal");
    }

    #[test]
    fn open_designs_get_distinct_colours_until_the_palette_runs_out() {
        let mut taken = Vec::new();
        for _ in 0..DESIGN_PALETTE.len() {
            let c = next_design_colour(&taken);
            assert!(!taken.contains(&c), "{c:?} given twice");
            taken.push(c);
        }
        assert!(
            DESIGN_PALETTE.contains(&next_design_colour(&taken)),
            "repeats"
        );
        // A closed design's colour is reused first.
        taken.remove(2);
        assert_eq!(next_design_colour(&taken), DESIGN_PALETTE[2]);
    }
}
