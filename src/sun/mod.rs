//! Sun: where the sun is, how much light reaches a panel, and what the panel makes of it.
//!
//! Pipeline, one module per model (each module doc is that model's data sheet):
//!
//! - [`position`]: NREL SPA sun position, ΔT, sunrise/transit/sunset with polar days.
//! - [`irradiance`]: extraterrestrial irradiance, air mass, Ineichen-Perez clear sky.
//! - [`decomposition`]: Erbs split of measured GHI into DNI and DHI.
//! - [`transposition`]: plane-of-array irradiance (isotropic, Hay-Davies, Perez).
//! - [`shading`]: terrain horizon hides the beam; sky-view factor scales the diffuse.
//! - [`measured`]: a measured weather record's components at any instant (linear, beam
//!   closed on GHI).
//! - [`clearness_mc`]: seeded daily clear-sky index draws (Beta) for the weather Monte Carlo.
//! - [`series`]: clear-sky time series of position, components and POA (parallel).
//! - [`panel`]: panel power with cell temperature (Faiman, NOCT); mounts and attitude.
//!
//! Everything here is pure: values in, values out, no I/O and no clock.
//!
//! # Units
//! Radians for angles, W/m² for irradiance, W for power, °C for temperatures, metres,
//! hPa for pressure; `DateTime<Utc>` for instants.

pub mod clearness_mc;
pub mod climate;
pub mod decomposition;
pub mod error;
pub mod irradiance;
pub mod measured;
pub mod panel;
pub mod position;
pub mod series;
pub mod shading;
mod spa_tables;
pub mod transposition;

pub use error::SunError;
