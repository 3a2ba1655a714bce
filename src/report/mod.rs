//! Reports and output files: pure serialisers plus one atomic writer.

pub mod atomic;
pub mod csv;
pub mod heatmap;
pub mod html;
pub mod json;
pub mod map;
pub mod montecarlo_plot;
pub mod plot;
pub mod season_plot;
pub mod sweep;
