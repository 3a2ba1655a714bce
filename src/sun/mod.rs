//! Sun position, irradiance, transposition, terrain shading and PV power (in progress).
