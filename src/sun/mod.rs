//! Sun: where the sun is, how much light reaches a panel, and what the panel makes of it.
//!
//! Pipeline, one module per model (each module doc is that model's data sheet):
//!
//! - [`position`]: NREL SPA sun position, ΔT, sunrise/transit/sunset with polar days.
//! - [`irradiance`]: extraterrestrial irradiance, air mass, Ineichen-Perez clear sky.
//! - [`decomposition`]: Erbs split of measured GHI into DNI and DHI.
//! - [`transposition`]: plane-of-array irradiance (isotropic, Hay-Davies, Perez).
//! - [`shading`]: terrain horizon hides the beam; sky-view factor scales the diffuse.
//! - [`series`]: clear-sky time series of position, components and POA (parallel).
//! - [`panel`]: panel power with cell temperature (Faiman, NOCT); mounts and attitude.
//!
//! Everything here is pure: values in, values out, no I/O and no clock.
//!
//! # Units
//! Radians for angles, W/m² for irradiance, W for power, °C for temperatures, metres,
//! hPa for pressure; `DateTime<Utc>` for instants.

pub mod climate;
pub mod decomposition;
pub mod error;
pub mod irradiance;
pub mod panel;
pub mod position;
pub mod series;
pub mod shading;
mod spa_tables;
pub mod transposition;

pub use error::SunError;
