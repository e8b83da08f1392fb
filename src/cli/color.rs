//! `stackwise color`: the colour of reflected and transmitted light.

use std::io::Write;
use std::path::PathBuf;

use anyhow::{Context as _, Result};
use clap::Args;

use super::map::{AngleRange, parse_angles};
use super::{emit, load_design, print_warnings};
use crate::analysis;
use crate::analysis::color::{Colour, Illuminant, Observer, colour_path};

/// Settings of the color command.
#[derive(Debug, Args)]
pub struct ColorArgs {
    /// The design file (.ron).
    pub design: PathBuf,
    /// Angle of incidence in degrees, in the incident medium.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
    /// CIE illuminant: D65 or A.
    #[arg(long, default_value = "D65")]
    pub illuminant: String,
    /// CIE observer: 2 (1931) or 10 (1964).
    #[arg(long, default_value = "2")]
    pub observer: String,
    /// The colour's path over angles FROM:TO:STEP (degrees, e.g. 0:80:5) instead of one
    /// angle; each row then starts with aoi_deg.
    #[arg(long, value_parser = parse_angles)]
    pub angles: Option<AngleRange>,
    /// Write the CSV here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

fn row(w: &mut dyn Write, light: &str, c: &Colour) -> std::io::Result<()> {
    let (xyz, lab) = (c.xyz, c.lab);
    writeln!(
        w,
        "{light},{},{},{},{},{},{},{},{}",
        xyz.x, xyz.y, xyz.z, c.xy[0], c.xy[1], lab.l, lab.a, lab.b
    )
}

fn hex(c: &Colour) -> String {
    let [r, g, b] = c.srgb.to_u8();
    let clip = if c.srgb.in_gamut {
        ""
    } else {
        " (outside sRGB, clipped)"
    };
    format!("#{r:02x}{g:02x}{b:02x}{clip}")
}

/// Runs the color command.
pub fn run(a: &ColorArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    let illuminant: Illuminant = a.illuminant.parse()?;
    let observer: Observer = a.observer.parse()?;
    let d = load_design(&a.design)?;
    let angles = match a.angles {
        Some(r) => analysis::angles_deg(r.from_deg, r.to_deg, r.step_deg)
            .context("angle range (--angles FROM:TO:STEP)")?,
        None => vec![a.aoi],
    };
    let path = colour_path(&d.resolve()?, &angles, illuminant, observer)?;
    print_warnings(&path.warnings, stderr)?;
    if a.angles.is_none() {
        writeln!(
            stderr,
            "sRGB swatch: reflected {}, transmitted {}",
            hex(&path.reflected[0]),
            hex(&path.transmitted[0])
        )?;
    }
    emit(a.out.as_deref(), stdout, |w| {
        let lead = if a.angles.is_some() { "aoi_deg," } else { "" };
        writeln!(w, "{lead}light,X,Y,Z,x,y,L,a,b")?;
        for (i, aoi) in path.aoi_deg.iter().enumerate() {
            for (light, c) in [
                ("reflected", &path.reflected[i]),
                ("transmitted", &path.transmitted[i]),
            ] {
                if a.angles.is_some() {
                    write!(w, "{aoi},")?;
                }
                row(w, light, c)?;
            }
        }
        Ok(())
    })
}
