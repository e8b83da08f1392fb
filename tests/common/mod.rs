//! Helpers shared by the integration tests.

#![allow(dead_code, reason = "each test file uses a different subset")]

use num_complex::Complex64;
use stackwise::optics::{Response, Side, StackAt, solve};

/// A real index.
pub fn re(n: f64) -> Complex64 {
    Complex64::new(n, 0.0)
}

/// Solves incident | layers (substrate side first) | substrate, semi-infinite substrate.
pub fn stack(
    incident: Complex64,
    layers: &[(Complex64, f64)],
    substrate: Complex64,
    wavelength_nm: f64,
    aoi_deg: f64,
) -> Response {
    stack_side(
        incident,
        layers,
        substrate,
        wavelength_nm,
        aoi_deg,
        Side::Front,
    )
}

/// As [`stack`], from a chosen side (Back = from inside the substrate, angle in the substrate).
pub fn stack_side(
    incident: Complex64,
    layers: &[(Complex64, f64)],
    substrate: Complex64,
    wavelength_nm: f64,
    aoi_deg: f64,
    side: Side,
) -> Response {
    let materials: Vec<Complex64> = layers.iter().map(|l| l.0).collect();
    let idx: Vec<(usize, f64)> = layers.iter().enumerate().map(|(i, l)| (i, l.1)).collect();
    let s = StackAt {
        incident,
        substrate,
        exit: re(1.0),
        materials: &materials,
        layers: &idx,
        back_layers: &[],
        substrate_mm: None,
    };
    solve(
        &s,
        wavelength_nm,
        aoi_deg.to_radians(),
        side,
        &mut Vec::new(),
    )
}

/// Quarter-wave thickness (nm) of index n at λ0: d = λ0 / (4 n).
pub fn qw(n: f64, lambda0_nm: f64) -> f64 {
    lambda0_nm / (4.0 * n)
}

/// (HL)^pairs H (or without the last H) written from the air side, returned in deposition
/// order (substrate first) as the solver wants.
pub fn qw_stack(
    nh: f64,
    nl: f64,
    pairs: usize,
    extra_h: bool,
    lambda0: f64,
) -> Vec<(Complex64, f64)> {
    // From the air side: H L H L ... (H). Reverse for deposition order.
    let mut from_air = Vec::new();
    for _ in 0..pairs {
        from_air.push((re(nh), qw(nh, lambda0)));
        from_air.push((re(nl), qw(nl, lambda0)));
    }
    if extra_h {
        from_air.push((re(nh), qw(nh, lambda0)));
    }
    from_air.reverse();
    from_air
}

/// A path inside the source tree (example designs, test files).
pub fn here(rel: &str) -> std::path::PathBuf {
    std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// The built `stackwise` binary, ready for arguments.
pub fn stackwise() -> assert_cmd::Command {
    assert_cmd::Command::cargo_bin("stackwise").expect("the binary builds")
}

/// Runs `stackwise ARGS` and returns (stdout, stderr), asserting success.
pub fn ok(args: &[&str]) -> (String, String) {
    let out = stackwise().args(args).output().expect("runs");
    let (o, e) = (
        String::from_utf8(out.stdout).expect("UTF-8 output"),
        String::from_utf8(out.stderr).expect("UTF-8 errors"),
    );
    assert!(out.status.success(), "{args:?} failed: {e}");
    (o, e)
}

/// Runs `stackwise ARGS` and returns stderr, asserting a failure with a message and no panic.
pub fn fails(args: &[&str]) -> String {
    let out = stackwise().args(args).output().expect("runs");
    let e = String::from_utf8_lossy(&out.stderr).into_owned();
    assert!(!out.status.success(), "{args:?} should fail");
    assert!(
        e.starts_with("error"),
        "{args:?}: message should start with error: {e}"
    );
    assert!(!e.contains("panicked"), "{args:?} panicked: {e}");
    e
}

/// Parses and runs `stackwise ARGS` in this process, through the same parser and dispatcher as
/// the binary; (stdout, stderr) or the whole error chain.
pub fn run_in_process(args: &[&str]) -> Result<(String, String), String> {
    use clap::Parser as _;
    let cli = stackwise::cli::Cli::try_parse_from(
        std::iter::once("stackwise").chain(args.iter().copied()),
    )
    .map_err(|e| e.to_string())?;
    let cmd = cli.command.ok_or("no command")?;
    let (mut out, mut err) = (Vec::new(), Vec::new());
    stackwise::cli::run(cmd, &mut out, &mut err).map_err(|e| format!("{e:#}"))?;
    Ok((
        String::from_utf8(out).expect("UTF-8"),
        String::from_utf8(err).expect("UTF-8"),
    ))
}

/// One layer of n = 1.38 on n = 1.52, a quarter wave at 550 nm, with the target
/// "R ≤ `goal` at 550 nm" (the layer alone reflects ((1.52 − 1.38²)/(1.52 + 1.38²))² =
/// 1.2601 % there: quarter-wave layer, Macleod, Thin-Film Optical Filters, ch. 3).
pub fn quarter_wave_with_target(goal: f64) -> stackwise::design::Design {
    use stackwise::design::{Design, Layer, Nm, Pol, Quantity, Target, TargetKind};
    use stackwise::material::{Material, Model};
    let mut d = Design::new_empty("QW");
    d.substrate = "G".into();
    d.materials = vec![
        Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
        Material::user("L", Model::Constant { n: 1.38, k: 0.0 }),
    ];
    d.layers = vec![Layer::new("L", Nm::new(550.0 / 4.0 / 1.38).expect("nm"))];
    d.targets = vec![Target {
        quantity: Quantity::R,
        pol: Pol::Mean,
        aoi_deg: 0.0,
        from_nm: 550.0,
        to_nm: 550.0,
        step_nm: 0.0,
        kind: TargetKind::AtMost,
        goal,
        tolerance: 0.0,
        weight: 1.0,
        measure: stackwise::design::Measure::Spectral,
    }];
    d
}

/// Steps the window one frame at a time (a progress bar animates, so it never settles) until
/// `done` holds; then lets it settle. Panics after about 60 s.
pub fn run_until<S>(h: &mut egui_kittest::Harness<'_, S>, done: impl Fn(&S) -> bool) {
    for _ in 0..6000 {
        h.step();
        if done(h.state()) {
            h.run();
            return;
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
    panic!("the window did not get there within 60 s");
}
