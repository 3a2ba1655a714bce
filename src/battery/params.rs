//! The `[battery]` table of a mission file: pack parameters with documented defaults
//! and ranges, checked into a [`Pack`](super::pack::Pack) by
//! [`Pack::new`](super::pack::Pack::new).
//!
//! # Units
//! Keys carry their units: `_wh`, `_v`, `_ah`, `_ohm`, `_c` (degrees Celsius, or C-rate
//! for `max_charge_c` / `max_discharge_c`: 1 C = the current that empties the nominal
//! capacity in one hour), `_j_mol`; SOC values are fractions 0..1.

use serde::Deserialize;

use super::chemistry::Chemistry;

/// Pack parameters as the mission file gives them. Size the pack either by
/// `capacity_wh` + `nominal_voltage_v`, or by `cells_series` + `cells_parallel` +
/// `cell_capacity_ah`; when neither is given the default size below applies.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct PackParams {
    /// Cell chemistry preset, `"lfp"` or `"nmc"`. Default `"lfp"`.
    pub chemistry: Chemistry,
    /// Energy between 0 and 100 % SOC at 25 degC and low rate, Wh; 1 to 10 000 000.
    /// Default (when no size is given) 1000 Wh: a small field-robot pack (an assumption
    /// for demos, not a recommendation).
    pub capacity_wh: Option<f64>,
    /// Nominal pack voltage, V; 1 to 1500. Default (when no size is given) 25.6 V: eight
    /// LFP cells in series at 3.2 V (common practice).
    pub nominal_voltage_v: Option<f64>,
    /// Cells in series; 1 to 400.
    pub cells_series: Option<u32>,
    /// Cells (strings) in parallel; 1 to 10 000.
    pub cells_parallel: Option<u32>,
    /// Capacity of one cell, A h; 0.01 to 2000.
    pub cell_capacity_ah: Option<f64>,
    /// Pack DC resistance at 25 degC and 50 % SOC, ohm; 1e-5 to 100. Default: the
    /// preset's cell resistance scaled to the pack (cells only: add wiring by giving the
    /// measured value here).
    pub resistance_ohm: Option<f64>,
    /// Usable capacity against temperature, `[[temp_c, fraction], ...]` with increasing
    /// temperature and fractions in (0, 1.5]; the cell data sheet's table. Default: the
    /// preset's table (see [`chemistry`](super::chemistry) for its source and limits).
    pub capacity_vs_temp: Option<Vec<[f64; 2]>>,
    /// Largest charge current as a C-rate; 0.01 to 10. Default 0.5 C (common practice
    /// for long cell life; the data sheet governs).
    pub max_charge_c: f64,
    /// Largest discharge current as a C-rate; 0.01 to 30. Default 2 C (common practice).
    pub max_discharge_c: f64,
    /// No charging below this cell temperature, degC; -40 to 20. Default 0 degC (common
    /// practice for Li-ion: lithium plating; the cell data sheet governs).
    pub charge_temp_min_c: f64,
    /// No charging above this cell temperature, degC; 20 to 80. Default 45 degC (common
    /// practice).
    pub charge_temp_max_c: f64,
    /// No discharging below this cell temperature, degC; -60 to 20. Default -20 degC
    /// (common practice).
    pub discharge_temp_min_c: f64,
    /// No discharging above this cell temperature, degC; 20 to 90. Default 60 degC
    /// (common practice).
    pub discharge_temp_max_c: f64,
    /// Hard discharge floor, SOC fraction; 0 to 0.5. Default 0.0 (the cell's lower
    /// voltage limit at low rate; the terminal-voltage limit under load applies too).
    pub cutoff_soc: f64,
    /// Planning reserve, SOC fraction; `cutoff_soc` to 0.9. Default 0.2 (common practice:
    /// a margin for model error and one unplanned night). Time below it is reported.
    pub reserve_soc: f64,
    /// Charge stored / charge passed while charging; 0.9 to 1. Default 0.999 (common
    /// practice for Li-ion at moderate rates).
    pub coulombic_efficiency: f64,
    /// Activation energy of the resistance, J/mol; 0 to 100 000. Default: the preset's
    /// 17 500 J/mol.
    pub resistance_activation_energy_j_mol: Option<f64>,
}

impl Default for PackParams {
    fn default() -> Self {
        PackParams {
            chemistry: Chemistry::Lfp,
            capacity_wh: None,
            nominal_voltage_v: None,
            cells_series: None,
            cells_parallel: None,
            cell_capacity_ah: None,
            resistance_ohm: None,
            capacity_vs_temp: None,
            max_charge_c: 0.5,
            max_discharge_c: 2.0,
            charge_temp_min_c: 0.0,
            charge_temp_max_c: 45.0,
            discharge_temp_min_c: -20.0,
            discharge_temp_max_c: 60.0,
            cutoff_soc: 0.0,
            reserve_soc: 0.2,
            coulombic_efficiency: 0.999,
            resistance_activation_energy_j_mol: None,
        }
    }
}

/// Default pack energy when no size is given, Wh (see [`PackParams::capacity_wh`]).
pub const DEFAULT_CAPACITY_WH: f64 = 1000.0;

/// Default nominal voltage when no size is given, V (see [`PackParams::nominal_voltage_v`]).
pub const DEFAULT_NOMINAL_VOLTAGE_V: f64 = 25.6;

impl PackParams {
    /// The pack's rated energy, Wh, however it is sized: `capacity_wh` as given; for a
    /// pack sized by cells, series cells × the chemistry's mean cell OCV (the same
    /// voltage the pack model uses to turn an energy into cells) × cells in parallel ×
    /// cell capacity; the default when no size is given. None when the size is given
    /// only in part (the pack model refuses such a file).
    pub fn rated_energy_wh(&self) -> Option<f64> {
        match (
            self.capacity_wh,
            self.cells_series,
            self.cells_parallel,
            self.cell_capacity_ah,
        ) {
            (Some(wh), None, None, None) => Some(wh),
            (None, Some(ns), Some(np), Some(q)) => {
                Some(f64::from(ns) * self.chemistry.preset().mean_ocv_v() * f64::from(np) * q)
            }
            (None, None, None, None) if self.nominal_voltage_v.is_none() => {
                Some(DEFAULT_CAPACITY_WH)
            }
            _ => None,
        }
    }

    /// The pack's size in words for reports: "460 Wh (8s6p)" for a pack sized by cells,
    /// "1200 Wh" otherwise; None as for [`Self::rated_energy_wh`].
    pub fn size_words(&self) -> Option<String> {
        let wh = self.rated_energy_wh()?;
        Some(match (self.cells_series, self.cells_parallel) {
            (Some(ns), Some(np)) => format!("{wh:.0} Wh ({ns}s{np}p)"),
            _ => format!("{wh} Wh"),
        })
    }

    /// The pack's nominal voltage, V, however it is sized (None as for
    /// [`Self::rated_energy_wh`]).
    pub fn rated_voltage_v(&self) -> Option<f64> {
        match (self.nominal_voltage_v, self.cells_series) {
            (Some(v), None) => Some(v),
            (None, Some(ns)) => Some(f64::from(ns) * self.chemistry.preset().mean_ocv_v()),
            (None, None) if self.capacity_wh.is_none() => Some(DEFAULT_NOMINAL_VOLTAGE_V),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::battery::chemistry::Chemistry;
    use crate::battery::pack::Pack;

    /// The rated energy is the pack model's own energy from 0 to 100 % SOC, however the
    /// pack is sized; a size given in part has none.
    #[test]
    fn rated_energy_is_the_pack_models_energy() {
        let cells = PackParams {
            chemistry: Chemistry::Lfp,
            cells_series: Some(8),
            cells_parallel: Some(6),
            cell_capacity_ah: Some(3.0),
            ..PackParams::default()
        };
        let energy = PackParams {
            chemistry: Chemistry::Nmc,
            capacity_wh: Some(1200.0),
            nominal_voltage_v: Some(48.0),
            ..PackParams::default()
        };
        for p in [cells, energy, PackParams::default()] {
            let wh = p.rated_energy_wh().unwrap();
            let model = Pack::new(&p).unwrap().stored_energy_wh(1.0);
            assert!((wh - model).abs() < 1e-9 * model, "{wh} against {model}");
        }
        let part = PackParams {
            cells_series: Some(8),
            ..PackParams::default()
        };
        assert_eq!(part.rated_energy_wh(), None);
    }
}
