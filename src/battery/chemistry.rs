//! Cell chemistry presets: open-circuit voltage against state of charge, DC resistance
//! and its temperature and SOC dependence, usable capacity against temperature, voltage
//! and temperature limits.
//!
//! # Sources
//! - **LFP** (LiFePO4 / graphite): open-circuit voltage of the PyBaMM 26.10.1.1 parameter
//!   set "Prada2013" (E. Prada et al., "A simplified electrochemical and thermal aging
//!   model of LiFePO4-graphite Li-ion batteries", J. Electrochem. Soc. 160(4) A616, 2013;
//!   LFP electrode OCP of Afshar et al. 2017, graphite OCP of Chen et al. 2020 as PyBaMM
//!   ships them), 2.0-3.6 V cell limits of that set.
//! - **NMC** (NMC811 / graphite-SiOx, LG M50 cell): open-circuit voltage of the PyBaMM
//!   set "Chen2020" (C.-H. Chen et al., "Development of experimental techniques for
//!   parameterization of multi-scale lithium-ion battery models", J. Electrochem. Soc.
//!   167, 080534, 2020), 2.5-4.2 V cell limits of that set.
//! - Cell OCV(SOC) = U_pos(y) - U_neg(x) with the electrode stoichiometries moved
//!   linearly between their 0 % and 100 % limits (PyBaMM's electrode state-of-health
//!   solver at the set's voltage limits). Nodes every 1 % SOC, rounded to 0.1 mV; the
//!   generating script and the 0.5 % reference file are in `tests/reference/battery/`.
//! - DC resistance: the 10 s, 1C discharge-pulse resistance of PyBaMM's DFN model at
//!   25 degC and 50 % SOC (Prada2013 for LFP, Chen2020 for NMC), written size-free as
//!   resistance x capacity (ohm A h). It excludes tabs, busbars, fuses and wiring: add
//!   the pack's measured interconnect resistance through `resistance_ohm`.
//! - Temperature dependence of resistance: Arrhenius, R(T) = R_25 exp(Ea/R_gas (1/T -
//!   1/T_25)), Ea = 17.5 kJ/mol fitted (least squares in ln R, by hand) to the pulse
//!   resistance of PyBaMM set "ORegan2022" (K. O'Regan et al., "Thermal-electrochemical
//!   parameters of a high energy lithium-ion cylindrical battery", Electrochimica Acta
//!   425, 140700, 2022) from -20 to 40 degC; used for both chemistries (no LFP set with
//!   temperature-dependent transport was at hand: an assumption).
//! - SOC dependence of resistance: R rises below 50 % SOC as 1 + k ((0.5 - SOC)/0.5)^2
//!   (shape: an assumption), k fitted to the 20 % SOC pulse of the same sets.
//! - Usable capacity against temperature: **NMC** from the PyBaMM set "ORegan2022", DFN,
//!   isothermal, C/5 constant-current discharge from 100 % SOC to 2.5 V, as a fraction
//!   of the 25 degC capacity. This model loses only 3.5 % at -20 degC, much less than
//!   cell data sheets commonly show (common practice: 20-40 % at -20 degC); it is the
//!   model's optimism, not a guarantee. **LFP**: 80 % at 0 degC and 70 % at -20 degC, a
//!   manufacturer's statement for a 12 V 100 Ah LiFePO4 battery (Canbat CLI100-12, as
//!   quoted in the article "How to store LiFePO4 batteries", funsongbattery.com): a
//!   vendor figure, not a cell data sheet. Both presets are placeholders for the cell
//!   maker's table, which the mission file can give as `capacity_vs_temp`.
//! - Temperature limits (charge 0 to 45 degC, discharge -20 to 60 degC): common practice
//!   for Li-ion cells; the cell's data sheet governs and the mission file must say so.
//!
//! # Units
//! SOC as a fraction 0..1; voltages V (per cell); resistance x capacity ohm A h;
//! temperatures degC; activation energy J/mol.

use super::curve::Curve;

/// Molar gas constant, J/(mol K) (CODATA 2018, exact since the 2019 SI redefinition).
pub const GAS_CONSTANT_J_MOL_K: f64 = 8.314_462_618;

/// Reference temperature of the resistance and capacity tables, degC.
pub const REFERENCE_TEMP_C: f64 = 25.0;

/// Cell chemistry of a pack.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Chemistry {
    /// Lithium iron phosphate / graphite (default: the common choice for cold, long-life
    /// field robots).
    #[default]
    Lfp,
    /// Nickel manganese cobalt oxide / graphite.
    Nmc,
}

/// The fixed data of one chemistry preset (per cell).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CellPreset {
    /// Short name used in messages and reports.
    pub name: &'static str,
    /// OCV at SOC = 0, 0.01, ..., 1.00, volts per cell.
    pub ocv_v: &'static [f64; 101],
    /// Lower voltage limit, V per cell (equals OCV at 0 % SOC).
    pub min_voltage_v: f64,
    /// Upper (charge) voltage limit, V per cell (equals OCV at 100 % SOC).
    pub max_voltage_v: f64,
    /// DC resistance x capacity at 25 degC, 50 % SOC, ohm A h.
    pub resistance_ohm_ah: f64,
    /// Coefficient k of the low-SOC resistance rise.
    pub resistance_low_soc_factor: f64,
    /// Activation energy of the resistance, J/mol.
    pub resistance_activation_energy_j_mol: f64,
    /// (temperature degC, usable fraction of the 25 degC capacity), increasing temperature.
    pub capacity_vs_temp: &'static [(f64, f64)],
}

/// LFP cell OCV, PyBaMM 26.10.1.1 set "Prada2013" (see the module doc), V at 1 % steps.
const LFP_OCV_V: [f64; 101] = [
    2.0000, 2.2655, 2.4600, 2.6028, 2.7077, 2.7853, 2.8432, 2.8874, 2.9223, 2.9515, 2.9781, 3.0041,
    3.0308, 3.0580, 3.0843, 3.1080, 3.1277, 3.1430, 3.1544, 3.1625, 3.1685, 3.1730, 3.1765, 3.1797,
    3.1827, 3.1857, 3.1890, 3.1926, 3.1966, 3.2010, 3.2058, 3.2110, 3.2163, 3.2218, 3.2272, 3.2324,
    3.2373, 3.2418, 3.2458, 3.2494, 3.2525, 3.2551, 3.2574, 3.2593, 3.2608, 3.2621, 3.2632, 3.2641,
    3.2649, 3.2655, 3.2660, 3.2665, 3.2669, 3.2672, 3.2675, 3.2678, 3.2680, 3.2682, 3.2684, 3.2686,
    3.2688, 3.2690, 3.2692, 3.2694, 3.2697, 3.2700, 3.2703, 3.2708, 3.2715, 3.2726, 3.2740, 3.2761,
    3.2791, 3.2829, 3.2875, 3.2926, 3.2975, 3.3018, 3.3053, 3.3079, 3.3097, 3.3110, 3.3118, 3.3124,
    3.3129, 3.3132, 3.3134, 3.3136, 3.3138, 3.3140, 3.3142, 3.3143, 3.3145, 3.3148, 3.3153, 3.3164,
    3.3193, 3.3274, 3.3502, 3.4150, 3.6000,
];

/// NMC cell OCV, PyBaMM 26.10.1.1 set "Chen2020" (see the module doc), V at 1 % steps.
const NMC_OCV_V: [f64; 101] = [
    2.5000, 2.7114, 2.8625, 2.9712, 3.0504, 3.1094, 3.1553, 3.1933, 3.2276, 3.2614, 3.2959, 3.3307,
    3.3637, 3.3924, 3.4157, 3.4339, 3.4480, 3.4592, 3.4687, 3.4772, 3.4852, 3.4932, 3.5014, 3.5099,
    3.5190, 3.5286, 3.5386, 3.5491, 3.5599, 3.5707, 3.5814, 3.5919, 3.6019, 3.6115, 3.6205, 3.6290,
    3.6372, 3.6449, 3.6524, 3.6597, 3.6670, 3.6743, 3.6817, 3.6894, 3.6972, 3.7054, 3.7139, 3.7227,
    3.7319, 3.7413, 3.7509, 3.7606, 3.7702, 3.7798, 3.7892, 3.7983, 3.8072, 3.8158, 3.8242, 3.8324,
    3.8406, 3.8490, 3.8578, 3.8673, 3.8779, 3.8896, 3.9020, 3.9145, 3.9266, 3.9377, 3.9479, 3.9575,
    3.9668, 3.9759, 3.9850, 3.9943, 4.0037, 4.0133, 4.0230, 4.0326, 4.0421, 4.0513, 4.0599, 4.0679,
    4.0749, 4.0809, 4.0858, 4.0896, 4.0924, 4.0946, 4.0967, 4.0991, 4.1025, 4.1074, 4.1144, 4.1236,
    4.1351, 4.1488, 4.1645, 4.1817, 4.2000,
];

/// LFP preset: Prada2013 OCV and resistance, vendor capacity-temperature points.
pub const LFP: CellPreset = CellPreset {
    name: "lfp",
    ocv_v: &LFP_OCV_V,
    min_voltage_v: 2.0,
    max_voltage_v: 3.6,
    // 0.030768 ohm x 2.3 A h (PyBaMM Prada2013 DFN, 10 s 1C pulse, 25 degC, 50 % SOC).
    resistance_ohm_ah: 0.0708,
    // 20 % SOC pulse is 1.40 x the 50 % one in the same run: k = 0.40 / 0.36.
    resistance_low_soc_factor: 1.12,
    resistance_activation_energy_j_mol: 17_500.0,
    capacity_vs_temp: &[(-20.0, 0.70), (0.0, 0.80), (25.0, 1.0)],
};

/// NMC preset: Chen2020 OCV and resistance, ORegan2022 capacity against temperature.
pub const NMC: CellPreset = CellPreset {
    name: "nmc",
    ocv_v: &NMC_OCV_V,
    min_voltage_v: 2.5,
    max_voltage_v: 4.2,
    // 0.028669 ohm x 5.0 A h (PyBaMM Chen2020 DFN, 10 s 1C pulse, 25 degC, 50 % SOC).
    resistance_ohm_ah: 0.1433,
    // 20 % SOC pulse is 1.047 x the 50 % one: k = 0.047 / 0.36.
    resistance_low_soc_factor: 0.13,
    resistance_activation_energy_j_mol: 17_500.0,
    capacity_vs_temp: &[
        (-20.0, 0.9649),
        (-10.0, 0.9781),
        (0.0, 0.9861),
        (10.0, 0.9925),
        (25.0, 1.0),
        (40.0, 1.0054),
    ],
};

impl Chemistry {
    /// The preset data of this chemistry.
    pub fn preset(self) -> &'static CellPreset {
        match self {
            Chemistry::Lfp => &LFP,
            Chemistry::Nmc => &NMC,
        }
    }
}

impl CellPreset {
    /// Cell OCV against SOC as a curve (nodes every 1 %).
    pub fn ocv_curve(&self) -> Curve {
        let socs: Vec<f64> = (0..=100).map(|i| f64::from(i) / 100.0).collect();
        Curve::new(socs, self.ocv_v.to_vec()).expect("preset OCV nodes are sorted and finite")
    }

    /// Energy-equivalent nominal cell voltage: the mean OCV over 0..100 % SOC, V. A pack
    /// given as `capacity_wh` and `nominal_voltage_v` holds exactly `capacity_wh` between
    /// 0 and 100 % SOC because this is the voltage its series count is reckoned with.
    pub fn mean_ocv_v(&self) -> f64 {
        self.ocv_curve().mean(0.0, 1.0)
    }
}

/// Arrhenius factor R(T)/R(25 degC) for activation energy `ea_j_mol` at `temp_c`.
pub fn arrhenius_factor(ea_j_mol: f64, temp_c: f64) -> f64 {
    let t_k = crate::units::c_to_k(temp_c);
    let t_ref_k = crate::units::c_to_k(REFERENCE_TEMP_C);
    (ea_j_mol / GAS_CONSTANT_J_MOL_K * (1.0 / t_k - 1.0 / t_ref_k)).exp()
}

/// Low-SOC resistance factor 1 + k ((0.5 - soc)/0.5)^2 below 50 % SOC, 1 above.
pub fn low_soc_factor(k: f64, soc: f64) -> f64 {
    let x = ((0.5 - soc) / 0.5).clamp(0.0, 1.0);
    1.0 + k * x * x
}
