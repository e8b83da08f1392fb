//! Stackwise: design and analysis of optical thin-film coatings.
//!
//! The physics core ([`optics`], [`material`]) knows nothing of files or screens; [`design`]
//! holds the document and its file format; [`analysis`] turns a design into spectra;
//! [`export`] writes results; the command line ([`cli`]) and the window ([`gui`]) sit on top
//! of the same functions, so a number the window shows is the number the CLI prints. [`table`]
//! is a leaf that reads numeric text tables and interpolates in them.

pub mod analysis;
pub mod cautions;
pub mod cli;
pub mod design;
pub mod export;
pub mod gui;
pub mod material;
pub mod number;
pub mod optics;
pub mod optimize;
pub mod table;
