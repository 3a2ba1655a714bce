//! Daily clear-sky index draws for the weather Monte Carlo.
