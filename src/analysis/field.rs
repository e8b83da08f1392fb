//! The electric-field intensity |E|² through a stack at one wavelength, angle and
//! polarisation, relative to the incident wave's |E|² — the standing-wave profile that
//! laser-mirror designers read to keep field peaks away from interfaces.
//!
//! Depth is measured from the front surface (the incident side, depth 0) into the stack; the
//! profile starts half a wave inside the incident medium (negative depth) and ends half a wave
//! into the substrate. Layer numbers follow the design (layer 1 on the substrate); the
//! substrate is numbered 0 and the incident medium N + 1 for a design of N layers.
//!
//! **Which field.** For s-polarised light E is tangential and the whole field is shown. For
//! p-polarised light the profile shows the **whole** field |E_x|² + |E_z|² (tangential plus
//! normal component, see [`crate::optics::field::intensity`]), relative to the incident
//! wave's whole |E|². Its normal part jumps at interfaces (D_z is continuous, not E_z), so at
//! oblique incidence a p profile is discontinuous there; the tangential part is continuous.
//!
//! With a thick substrate the profile is that of the coherent coating on a semi-infinite
//! substrate of the same real index: light returning from the back surface is incoherent and
//! not part of the standing wave.
//!
//! [`crate::cautions::FIELD`] goes with every presentation of this profile.

use super::Warning;
use super::media::{MediaAt, ViewError, check_step, intervals};
use crate::design::ResolvedDesign;
use crate::optics::Tilted;
use crate::optics::field::{Polarisation, Tangential, boundary_fields, intensity, propagate};

/// Most samples one profile may have.
pub const MAX_FIELD_POINTS: u64 = 2_000_000;

/// The peak of |E|² inside one layer.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerPeak {
    /// Layer number (1 = on the substrate).
    pub layer: usize,
    /// The layer's material.
    pub material: String,
    /// Depth of the layer's top (incident side), nm.
    pub top_nm: f64,
    /// Depth of the layer's bottom (substrate side), nm.
    pub bottom_nm: f64,
    /// Largest |E|² sampled in the layer (both ends included).
    pub peak_e2: f64,
    /// Depth of that peak, nm.
    pub peak_depth_nm: f64,
}

/// |E|² at one interface, from both sides (they differ for oblique p light).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InterfaceField {
    /// Depth of the interface, nm.
    pub depth_nm: f64,
    /// The medium above (incident side): a layer number, or N + 1 for the incident medium.
    pub above: usize,
    /// The medium below: a layer number, or 0 for the substrate.
    pub below: usize,
    /// |E|² just above.
    pub e2_above: f64,
    /// |E|² just below.
    pub e2_below: f64,
}

impl InterfaceField {
    /// The larger of the two sides.
    #[must_use]
    pub fn peak_e2(&self) -> f64 {
        self.e2_above.max(self.e2_below)
    }
}

/// The |E|² profile through a stack: plain data a plot borrows directly.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldProfile {
    /// Vacuum wavelength, nm.
    pub wavelength_nm: f64,
    /// Angle of incidence in the incident medium, degrees.
    pub aoi_deg: f64,
    /// Polarisation shown.
    pub pol: Polarisation,
    /// (depth nm, |E|² relative to the incident wave) in order of depth. A layer's two ends
    /// are both present, so each interface appears twice (once per side).
    pub points: Vec<[f64; 2]>,
    /// The medium of each point: layer number, 0 for the substrate, N + 1 for the incident
    /// medium.
    pub point_layer: Vec<usize>,
    /// Per layer, top of the stack first: its depth span and peak.
    pub layers: Vec<LayerPeak>,
    /// Per interface, the front surface first.
    pub interfaces: Vec<InterfaceField>,
    /// Net power flow into the stack through each boundary, relative to the incident wave's,
    /// substrate boundary first: T there, 1 − R at the front surface, the same everywhere in a
    /// lossless stack.
    pub net_flow: Vec<f64>,
    /// Materials evaluated outside their data.
    pub warnings: Vec<Warning>,
}

/// |E|² down through a stretch of medium `m`: from `z_top_nm` above the plane where the
/// fields are `at`, down `length_nm`, at `k + 1` evenly spaced depths (k ≥ 8 intervals, none
/// longer than `step_nm`). Returns (depth below the stretch's top, |E|²) pairs.
fn stretch(
    m: &Tilted,
    at: Tangential,
    (z_top_nm, length_nm): (f64, f64),
    step_nm: f64,
    wavelength_nm: f64,
    media: &MediaAt,
    pol: Polarisation,
) -> Vec<(f64, f64)> {
    let k = intervals(length_nm, step_nm, 8);
    (0..=k)
        .map(|i| {
            let u = length_nm * i as f64 / k as f64;
            let f = propagate(m, pol, at, z_top_nm - u, wavelength_nm);
            (u, intensity(m, pol, f, media.snell, media.cos0))
        })
        .collect()
}

/// The |E|² profile of `d` at `wavelength_nm`, `aoi_deg` (in the incident medium) and `pol`,
/// sampled at most `step_nm` apart (every layer gets at least 8 intervals).
///
/// ```
/// use stackwise::analysis::field::field_profile;
/// use stackwise::design::{Design, Layer, Nm};
/// use stackwise::material::{Material, Model};
/// use stackwise::optics::field::Polarisation;
/// let mut d = Design::new_empty("QW");
/// d.substrate = "S".into();
/// d.materials = vec![Material::user("S", Model::Constant { n: 1.52, k: 0.0 }),
///                    Material::user("H", Model::Constant { n: 2.35, k: 0.0 })];
/// d.layers = vec![Layer::new("H", Nm::new(550.0 / (4.0 * 2.35))?)];
/// let f = field_profile(&d.resolve()?, 550.0, 0.0, Polarisation::S, 1.0)?;
/// // Lossless: the same net power flow at the substrate and at the surface.
/// assert!((f.net_flow[0] - f.net_flow[1]).abs() < 1e-12);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn field_profile(
    d: &ResolvedDesign,
    wavelength_nm: f64,
    aoi_deg: f64,
    pol: Polarisation,
    step_nm: f64,
) -> Result<FieldProfile, ViewError> {
    let media = MediaAt::new(d, wavelength_nm, aoi_deg)?;
    if media.layers.is_empty() {
        return Err(ViewError::NoLayers {
            view: "field profile",
        });
    }
    let margin_in = wavelength_nm / (2.0 * media.incident.n.re);
    let margin_sub = wavelength_nm / (2.0 * media.substrate.n.re.max(1e-3));
    let span = media.total_nm() + margin_in + margin_sub;
    check_step("the field profile", span, step_nm, MAX_FIELD_POINTS)?;
    let bounds = boundary_fields(
        &media.incident,
        &media.layers,
        &media.substrate,
        wavelength_nm,
        pol,
    );
    let n = media.layers.len();
    let eta0 = crate::optics::field::admittance(&media.incident, pol).re;
    let net_flow = bounds.iter().map(|b| b.power_flow(eta0)).collect();

    let mut points = Vec::new();
    let mut point_layer = Vec::new();
    let mut push = |depth: f64, e2: f64, layer: usize| {
        points.push([depth, e2]);
        point_layer.push(layer);
    };
    let along = |m: &Tilted, at: Tangential, span: (f64, f64)| {
        stretch(m, at, span, step_nm, wavelength_nm, &media, pol)
    };
    // The incident medium: the standing wave above the surface.
    let mut e2_above = 0.0;
    for (u, e2) in along(&media.incident, bounds[n], (margin_in, margin_in)) {
        push(u - margin_in, e2, n + 1);
        e2_above = e2;
    }
    let mut layers = Vec::with_capacity(n);
    let mut interfaces = Vec::with_capacity(n + 1);
    let mut top = 0.0;
    for j in (1..=n).rev() {
        let (m, d_nm) = &media.layers[j - 1];
        let samples = along(m, bounds[j - 1], (*d_nm, *d_nm));
        let (first, last) = (samples[0].1, samples[samples.len() - 1].1);
        let mut peak = (f64::NEG_INFINITY, top);
        for &(u, e2) in &samples {
            if e2 > peak.0 {
                peak = (e2, top + u);
            }
            push(top + u, e2, j);
        }
        interfaces.push(InterfaceField {
            depth_nm: top,
            above: j + 1,
            below: j,
            e2_above,
            e2_below: first,
        });
        e2_above = last;
        layers.push(LayerPeak {
            layer: j,
            material: d.materials[d.layers[j - 1].0].name.clone(),
            top_nm: top,
            bottom_nm: top + d_nm,
            peak_e2: peak.0,
            peak_depth_nm: peak.1,
        });
        top += d_nm;
    }
    // The substrate: the transmitted wave below the last interface.
    let below = along(&media.substrate, bounds[0], (0.0, margin_sub));
    interfaces.push(InterfaceField {
        depth_nm: top,
        above: 1,
        below: 0,
        e2_above,
        e2_below: below[0].1,
    });
    for (u, e2) in below {
        push(top + u, e2, 0);
    }
    Ok(FieldProfile {
        wavelength_nm,
        aoi_deg,
        pol,
        points,
        point_layer,
        layers,
        interfaces,
        net_flow,
        warnings: media.warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{Design, Layer, Nm};
    use crate::material::{Material, Model};

    fn mirror(pairs: usize) -> Design {
        let mut d = Design::new_empty("mirror");
        d.substrate = "S".into();
        d.materials = vec![
            Material::user("S", Model::Constant { n: 1.52, k: 0.0 }),
            Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
            Material::user("L", Model::Constant { n: 1.45, k: 0.0 }),
        ];
        let h = Nm::new(1064.0 / (4.0 * 2.35)).unwrap();
        let l = Nm::new(1064.0 / (4.0 * 1.45)).unwrap();
        for _ in 0..pairs {
            d.layers.push(Layer::new("H", h));
            d.layers.push(Layer::new("L", l));
        }
        d.layers.push(Layer::new("H", h));
        d
    }

    #[test]
    fn quarter_wave_mirror_has_field_nodes_at_the_high_low_interfaces() {
        // At the centre wavelength a quarter-wave mirror with H outermost reflects with
        // r ≈ −1, so E has a node at the surface; every quarter wave further down nodes and
        // antinodes alternate: nodes where L lies above H, antinodes where H lies above L
        // (Macleod, "Thin-Film Optical Filters", standing waves in a quarter-wave stack —
        // from memory; it follows from E = 1 + r and the quarter-wave matrices).
        let f = field_profile(
            &mirror(8).resolve().unwrap(),
            1064.0,
            0.0,
            Polarisation::S,
            0.5,
        )
        .unwrap();
        assert_eq!(f.layers.len(), 17, "every layer listed");
        assert!(
            f.interfaces[0].peak_e2() < 1e-3,
            "surface node {:?}",
            f.interfaces[0]
        );
        let node = &f.interfaces[8];
        assert!(node.peak_e2() < 1e-3, "{node:?}");
        // Antinode below the outer H layer: |H| = 2 at the surface, E = H / nH a quarter wave
        // down, so |E|² = (2 / 2.35)² for R → 1.
        let anti = &f.interfaces[1];
        assert!(
            (anti.peak_e2() - (2.0f64 / 2.35).powi(2)).abs() < 1e-2,
            "{anti:?}"
        );
        assert!(f.points.iter().all(|p| p[1].is_finite()), "finite samples");
        assert_eq!(f.point_layer.first(), Some(&18), "incident medium first");
        assert_eq!(f.point_layer.last(), Some(&0), "substrate last");
    }

    #[test]
    fn no_layers_is_refused_by_name() {
        let mut d = mirror(0);
        d.layers.clear();
        let e = field_profile(&d.resolve().unwrap(), 550.0, 0.0, Polarisation::S, 1.0).unwrap_err();
        assert!(e.to_string().contains("no layers"), "{e}");
    }

    #[test]
    fn bad_angle_and_step_are_refused() {
        let d = mirror(1).resolve().unwrap();
        let e = field_profile(&d, 550.0, 90.0, Polarisation::P, 1.0).unwrap_err();
        assert!(e.to_string().contains("90"), "{e}");
        let e = field_profile(&d, 550.0, 0.0, Polarisation::P, 0.0).unwrap_err();
        assert!(e.to_string().contains("step"), "{e}");
        let e = field_profile(&d, f64::NAN, 0.0, Polarisation::P, 1.0).unwrap_err();
        assert!(e.to_string().contains("wavelength"), "{e}");
    }
}
