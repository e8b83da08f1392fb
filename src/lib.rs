//! Stackwise: design and analysis of optical thin-film coatings.
//!
//! The physics core ([`optics`], [`material`]) knows nothing of files or screens; [`design`]
//! holds the document and its file format; [`analysis`] turns a design into spectra; the
//! command line ([`cli`]) and the window (`gui`) sit on top of the same functions.

pub mod design;
pub mod material;
pub mod optics;
