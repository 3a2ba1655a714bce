//! Lumped vehicle model: traction, powertrain, speed, attitude, stability (in progress).
