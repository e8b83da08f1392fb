//! The cautions the program shows wherever a computed result could be mistaken for a
//! guarantee of safety (laser mirrors, blocking filters, optical density).

/// One line, for plots, reports and status lines.
pub const SHORT: &str = "Computed values are theoretical; laser damage thresholds and protective \
                         filters need testing and certification under the applicable standards \
                         and local codes.";

/// The full list, shown in the window and the README.
pub const ALL: [&str; 4] = [
    "Every value Stackwise computes is theoretical: ideal, homogeneous layers with the optical \
     constants given. Real coatings differ through thickness errors, index drift, \
     inhomogeneity, roughness and absorption that the data do not show.",
    "Stackwise does not predict laser-induced damage. Damage thresholds depend on wavelength, \
     pulse length, beam size, repetition rate and the test protocol; they must be measured \
     (ISO 21254) on coatings made in the real process.",
    "A computed optical density or blocking level is not a certification. Laser-protective \
     filters and eyewear must be tested and certified under the applicable standards and \
     local codes (for example EN 207 / ISO 19818-1 in Europe, ANSI Z136 in the United States) \
     before anyone relies on them.",
    "Blocking shifts to shorter wavelengths as the angle of incidence grows: check every angle \
     and polarisation that matters.",
];

/// Goes with every field-intensity (|E|²) profile, in the window, the command line and
/// exported files.
pub const FIELD: &str = "Stackwise does not predict laser-induced damage. The |E|² profile is \
                         theoretical (ideal layers, the optical constants given); damage \
                         thresholds depend on wavelength, pulse length, beam size, repetition \
                         rate and the test protocol and must be measured (ISO 21254) on \
                         coatings made in the real process.";
