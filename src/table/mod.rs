//! Plain numeric tables: reading them from text and interpolating in them.
//!
//! A leaf of the program: nothing here knows about materials, designs or spectra. The n,k
//! importer, the measured-curve importer and the built-in material data all read their text
//! through [`read_text_table`]; dispersion tables and measured curves interpolate with
//! [`interp`].

pub mod interp;
mod text;

pub use text::{
    GUESS_UM_BELOW, Layout, Row, Separator, TableError, TextTable, WavelengthUnit, choose_unit,
    read_text_table, unit_in_header,
};
