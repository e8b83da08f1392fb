//! Plain numeric tables: reading them from text and interpolating in them.
//!
//! A leaf of the program: nothing here knows about materials, designs or spectra. The n,k
//! importer, the measured-curve importer and the built-in material data all read their text
//! through [`read_text_table`]; dispersion tables and measured curves interpolate with
//! [`interp`].

pub mod interp;
mod text;
mod units;

pub use text::{Layout, Row, Separator, TableError, TextTable, read_text_table};
pub use units::{GUESS_UM_BELOW, WavelengthUnit, choose_unit, unit_in_header};
