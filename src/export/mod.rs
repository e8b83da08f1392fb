//! Handing results over: CSV files of spectra, angle scans and optical constants.

pub mod csv;
