//! What is computed and shown: reflectance, transmittance or absorptance, for s, p or their
//! mean — and how each is named in words, once for the window, the images and the reports.

use serde::{Deserialize, Serialize};

/// A quantity of the response.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Quantity {
    /// Reflectance (fraction).
    R,
    /// Transmittance (fraction).
    T,
    /// Absorptance (fraction).
    A,
}

impl Quantity {
    /// The quantity in words, with its symbol: "reflectance R".
    ///
    /// ```
    /// assert_eq!(stackwise::design::Quantity::T.describe(), "transmittance T");
    /// ```
    #[must_use]
    pub fn describe(self) -> &'static str {
        match self {
            Quantity::R => "reflectance R",
            Quantity::T => "transmittance T",
            Quantity::A => "absorptance A",
        }
    }

    /// The symbol: "R", "T" or "A".
    #[must_use]
    pub fn symbol(self) -> &'static str {
        match self {
            Quantity::R => "R",
            Quantity::T => "T",
            Quantity::A => "A",
        }
    }
}

/// A polarisation, or the mean of both.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Pol {
    /// s (TE) polarisation.
    S,
    /// p (TM) polarisation.
    P,
    /// The mean of s and p (unpolarised light).
    Mean,
}

impl Pol {
    /// The polarisation in words: "s-polarised", "p-polarised" or "mean of s and p".
    #[must_use]
    pub fn describe(self) -> &'static str {
        match self {
            Pol::S => "s-polarised",
            Pol::P => "p-polarised",
            Pol::Mean => "mean of s and p",
        }
    }
}
