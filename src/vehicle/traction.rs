//! Traction: grade and rolling resistance on firm ground, and soft soil by Bekker's
//! pressure–sinkage relation with Mohr–Coulomb / Janosi–Hanamoto thrust.
//!
//! # Method and sources
//! - Firm ground (no soil named): resistance along the path
//!   `F = m g (C_rr cos θ + sin θ)`, so the work over a straight step of horizontal
//!   length d and rise dz is `W = m g (C_rr d + dz)` (sunward DESIGN.md, "Physics core";
//!   textbook statics: the normal force is m g cos θ and the path is d / cos θ).
//!   Traction limit: `|F| ≤ μ m g cos θ` with the ground friction coefficient μ.
//! - Soft soil, pressure–sinkage (M. G. Bekker, *Theory of Land Locomotion*, University
//!   of Michigan Press, 1956; in J. Y. Wong, *Theory of Ground Vehicles*, 4th ed., Wiley,
//!   2008, chapter 2): `p = (k_c / b + k_φ) zⁿ`.
//! - Rigid-wheel sinkage and compaction resistance (Bekker's closed form as given in Wong
//!   2008, chapter 2, section on the motion resistance of a rigid wheel; the equation
//!   numbers are not checked here). It integrates p over the front half of the contact
//!   arc with the small-sinkage approximation x² ≈ D (z₀ − z):
//!   ```text
//!   z₀  = [ 3 W / ((3 − n) (k_c + b k_φ) √D) ]^(2 / (2n + 1))
//!   R_c = b (k_c / b + k_φ) z₀^(n+1) / (n + 1)          (vertical work of compaction)
//!   ```
//!   with W the wheel's normal load, b its width and D its diameter.
//! - Thrust (Wong 2008, chapter 2: Mohr–Coulomb shear strength `τ_max = c + p tan φ` with
//!   the Janosi–Hanamoto shear-displacement curve `τ = τ_max (1 − e^(−j/K))`, shear
//!   displacement j = i x growing along the contact, uniform pressure over the contact):
//!   ```text
//!   F(i) = (A c + W tan φ) [1 − K / (i l) · (1 − e^(−i l / K))]
//!   ```
//!   with contact length `l = √(D z₀)` (chord of the sunk arc, small-sinkage
//!   approximation) and area A = b l per wheel; i is the slip.
//!
//! # Units
//! Loads and forces in newtons; lengths in metres; k_c in N/m^(n+1), k_φ in N/m^(n+2);
//! cohesion in pascals; friction angle in radians; slip dimensionless in [0, 1).
//!
//! # Validity and what is left out
//! Measured against numerical integration of its own defining relations
//! (tests/reference/vehicle): the closed form's series truncation (it replaces
//! B(n+1, ½)/2 by (3 − n)/3) moves the sinkage by −5.8 % at n = 0.5, −3.9 % at n = 0.7,
//! +1.5 % at n = 1.1 and +10.6 % at n = 1.6 (exact at n = 1); the small-sinkage arc adds
//! up to about 0.4 · z₀/D. Both are small beside the spread of real soil values.
//! Bekker's closed form is for a rigid wheel in homogeneous soil at small sinkage; Wong
//! warns that it loses accuracy for wheels under about 50 cm diameter and for sinkage
//! above about D/6 (from memory). Left out: bulldozing resistance, slip sinkage, grousers,
//! tyre deflection, multi-pass compaction (each wheel is taken as running on virgin
//! soil, which overstates the resistance of rear wheels), the shear displacement along
//! the curved contact (Wong–Reece; the uniform-pressure form used here mobilises little
//! shear on the short contacts of small wheels, so with the loose-sand K of 25 mm the
//! demo rover reaches its slip cap of 0.5 on dry sand at about a 5° climb: probably
//! pessimistic, and K is the weakest number of the soil table), soil layering and the effect of
//! slope on the soil's bearing capacity. The soil values are laboratory measurements of
//! particular soils at a particular moisture: real ground varies by a factor of several.

use std::f64::consts::PI;

/// Bekker–Mohr–Coulomb–Janosi soil parameters.
///
/// # Units
/// n dimensionless; `kc_n_m` in N/m^(n+1); `kphi_n_m` in N/m^(n+2); `cohesion_pa` in Pa;
/// `friction_angle_rad` in radians; `shear_modulus_m` (Janosi–Hanamoto K) in metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Soil {
    /// Sinkage exponent n (0 < n < 3 for the closed form).
    pub n: f64,
    /// Cohesive modulus of deformation k_c, N/m^(n+1).
    pub kc_n_m: f64,
    /// Frictional modulus of deformation k_φ, N/m^(n+2).
    pub kphi_n_m: f64,
    /// Cohesion c, Pa.
    pub cohesion_pa: f64,
    /// Angle of internal shearing resistance φ, radians.
    pub friction_angle_rad: f64,
    /// Shear deformation modulus K of the Janosi–Hanamoto curve, metres.
    pub shear_modulus_m: f64,
}

/// A soil of the shipped table with its name and source.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NamedSoil {
    /// The name used in rover files (`soil = "dry-sand"`).
    pub name: &'static str,
    /// Its parameters.
    pub soil: Soil,
    /// Where the values come from.
    pub source: &'static str,
}

/// Where the Bekker and Mohr–Coulomb values of the Wong rows come from.
const WONG_T23: &str = "Wong, Theory of Ground Vehicles, 4th ed., Wiley 2008, Table 2.3 \
     (values originally measured by the Land Locomotion Laboratory and others)";

/// Builds a [`Soil`] from the units the handbook prints (kN/m^(n+1), kN/m^(n+2), kPa,
/// degrees, millimetres).
const fn soil_kn(n: f64, kc_kn: f64, kphi_kn: f64, c_kpa: f64, phi_deg: f64, k_mm: f64) -> Soil {
    Soil {
        n,
        kc_n_m: kc_kn * 1000.0,
        kphi_n_m: kphi_kn * 1000.0,
        cohesion_pa: c_kpa * 1000.0,
        // const context: degrees to radians by hand; units::deg_to_rad is not const.
        friction_angle_rad: phi_deg * (PI / 180.0),
        shear_modulus_m: k_mm / 1000.0,
    }
}

/// The named soils. Values of n, k_c, k_φ, c and φ as printed in the source table, in
/// its units (kN/m^(n+1), kN/m^(n+2), kPa, degrees). Provenance, honestly: the rows were
/// written from memory of Wong's Table 2.3 and then compared with independent public
/// transcriptions of the same table (several open-source terramechanics codes quote the
/// identical numbers for dry sand, sandy loam at 15 % moisture, the clayey soil and lunar
/// soil); the printed book itself was not at hand. Janosi–Hanamoto K is not part of
/// Table 2.3; its values are marked per row.
pub const SOILS: [NamedSoil; 6] = [
    NamedSoil {
        name: "dry-sand",
        // Wong Table 2.3, "Dry sand (Land Locomotion Lab., LLL)", 0 % moisture.
        // K = 25 mm: loose sand, from memory of Wong's text on shear deformation moduli.
        soil: soil_kn(1.1, 0.99, 1528.43, 1.04, 28.0, 25.0),
        source: WONG_T23,
    },
    NamedSoil {
        name: "sandy-loam",
        // Wong Table 2.3, "Sandy loam (LLL)", 15 % moisture. K = 25 mm, from memory
        // (not in the table).
        soil: soil_kn(0.7, 5.27, 1515.04, 1.72, 29.0, 25.0),
        source: WONG_T23,
    },
    NamedSoil {
        name: "clay",
        // Wong Table 2.3, "Clayey soil (Thailand)", 38 % moisture. K = 6 mm: clay at
        // maximum compaction, from memory of Wong's text.
        soil: soil_kn(0.5, 13.19, 692.15, 4.14, 13.0, 6.0),
        source: WONG_T23,
    },
    NamedSoil {
        name: "snow",
        // Wong Table 2.3, "Snow (U.S.)". From memory; not found in a second
        // transcription. K = 25 mm, lower end of fresh snow, from memory.
        soil: soil_kn(1.6, 4.37, 196.72, 1.03, 19.7, 25.0),
        source: "Wong, Theory of Ground Vehicles, 4th ed., Wiley 2008, Table 2.3 \
                 (row 'Snow (U.S.)'; from memory, not checked against a second copy)",
    },
    NamedSoil {
        name: "lunar-regolith",
        // Lunar soil as commonly quoted after Bekker (not a row of Wong Table 2.3):
        // n 1.0, k_c 1.4, k_φ 820, c 0.17 kPa, φ 35°, K 18 mm. From memory; the same
        // numbers appear in public code citing Ding et al. (2015), Table I.
        soil: soil_kn(1.0, 1.4, 820.0, 0.17, 35.0, 18.0),
        source: "lunar soil after Bekker, as quoted by Ding et al. 2015, Table I \
                 (from memory; original not checked)",
    },
    NamedSoil {
        name: "regolith-simulant",
        // Lunar regolith simulant HIT-LSS1: n 1.1, k_c 15.6, k_φ 2407.4, c 0.25 kPa,
        // φ 31.9°, K 10 mm (9.7–13.1 mm). From a public transcription citing Ding et al.
        // (2015), Table I; the paper itself was not at hand.
        soil: soil_kn(1.1, 15.6, 2407.4, 0.25, 31.9, 10.0),
        source: "lunar regolith simulant HIT-LSS1, Ding et al. 2015, Table I \
                 (via a public transcription; original not checked)",
    },
];

/// Looks a soil up by name (exact, lower case with hyphens).
pub fn named_soil(name: &str) -> Option<&'static NamedSoil> {
    SOILS.iter().find(|s| s.name == name)
}

/// The names of the shipped soils, comma separated (for error messages).
pub fn soil_names() -> String {
    let names: Vec<&str> = SOILS.iter().map(|s| s.name).collect();
    names.join(", ")
}

/// Wheel geometry seen by the soil.
///
/// # Units
/// Metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WheelGeom {
    /// Wheel diameter D, m.
    pub diameter_m: f64,
    /// Wheel width b, m.
    pub width_m: f64,
}

/// Bekker pressure under a plate of width b at sinkage z, Pa.
#[inline]
pub fn bekker_pressure_pa(soil: &Soil, width_m: f64, sinkage_m: f64) -> f64 {
    (soil.kc_n_m / width_m + soil.kphi_n_m) * sinkage_m.max(0.0).powf(soil.n)
}

/// Rigid-wheel static sinkage z₀ for a wheel carrying `load_n`, metres (Bekker's
/// closed form, module doc). Zero for a non-positive load.
#[inline]
pub fn sinkage_m(soil: &Soil, wheel: WheelGeom, load_n: f64) -> f64 {
    if load_n <= 0.0 {
        return 0.0;
    }
    let n = soil.n;
    let k = soil.kc_n_m + wheel.width_m * soil.kphi_n_m;
    let base = 3.0 * load_n / ((3.0 - n) * k * wheel.diameter_m.sqrt());
    base.powf(2.0 / (2.0 * n + 1.0))
}

/// Compaction resistance of one wheel at sinkage z₀, newtons (module doc).
#[inline]
pub fn compaction_resistance_n(soil: &Soil, width_m: f64, sinkage_m: f64) -> f64 {
    let n = soil.n;
    width_m * (soil.kc_n_m / width_m + soil.kphi_n_m) * sinkage_m.powf(n + 1.0) / (n + 1.0)
}

/// Contact of one wheel with the soil: what the thrust law needs.
///
/// # Units
/// Newtons, metres, square metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Contact {
    /// Normal load on the wheel, N.
    pub load_n: f64,
    /// Contact length l = √(D z₀), m.
    pub length_m: f64,
    /// Contact area b l, m².
    pub area_m2: f64,
}

impl Contact {
    /// The contact of a wheel sunk by `sinkage_m`.
    #[inline]
    pub fn of_wheel(wheel: WheelGeom, load_n: f64, sinkage_m: f64) -> Contact {
        let length_m = (wheel.diameter_m * sinkage_m).sqrt();
        Contact {
            load_n,
            length_m,
            area_m2: wheel.width_m * length_m,
        }
    }
}

/// Largest thrust the soil can give one wheel, at full shear mobilisation:
/// `A c + W tan φ`, newtons.
#[inline]
pub fn max_thrust_n(soil: &Soil, contact: &Contact) -> f64 {
    contact.area_m2 * soil.cohesion_pa + contact.load_n * soil.friction_angle_rad.tan()
}

/// Thrust of one wheel at slip `slip` by Mohr–Coulomb with Janosi–Hanamoto (module
/// doc), newtons. Zero at zero slip; rises monotonically towards [`max_thrust_n`].
#[inline]
pub fn thrust_n(soil: &Soil, contact: &Contact, slip: f64) -> f64 {
    let il = slip.max(0.0) * contact.length_m;
    if il <= 0.0 {
        return 0.0;
    }
    let k = soil.shear_modulus_m;
    let mobilised = 1.0 - k / il * (1.0 - (-il / k).exp());
    max_thrust_n(soil, contact) * mobilised
}

/// Number of bisection steps for the slip: halves [0, max_slip] 48 times, far below any
/// slip resolution that matters (2⁻⁴⁸ ≈ 4e-15).
const SLIP_BISECTIONS: usize = 48;

/// The slip at which one wheel gives `needed_n` of thrust, found by bisection on
/// [0, `max_slip`]; None when even `max_slip` does not give it (the traction limit).
pub fn slip_for_thrust(
    soil: &Soil,
    contact: &Contact,
    needed_n: f64,
    max_slip: f64,
) -> Option<f64> {
    if needed_n <= 0.0 {
        return Some(0.0);
    }
    if thrust_n(soil, contact, max_slip) < needed_n {
        return None;
    }
    let (mut lo, mut hi) = (0.0, max_slip);
    for _ in 0..SLIP_BISECTIONS {
        let mid = 0.5 * (lo + hi);
        if thrust_n(soil, contact, mid) < needed_n {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(hi)
}

/// Firm-ground resistance along the path for a vehicle of weight `weight_n` on grade
/// θ: `weight (C_rr cos θ + sin θ)`, newtons (positive = the wheels must push).
#[inline]
pub fn grade_rolling_force_n(weight_n: f64, rolling_resistance: f64, grade_rad: f64) -> f64 {
    weight_n * (rolling_resistance * grade_rad.cos() + grade_rad.sin())
}

/// Mechanical work on the wheels over a straight firm-ground step,
/// `W = weight (C_rr d + dz)`, joules (DESIGN.md, "Physics core").
#[inline]
pub fn grade_rolling_work_j(weight_n: f64, rolling_resistance: f64, d_m: f64, dz_m: f64) -> f64 {
    weight_n * (rolling_resistance * d_m + dz_m)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_named_soil_is_found_and_inside_the_closed_form_range() {
        for s in SOILS.iter() {
            assert_eq!(named_soil(s.name).map(|x| x.name), Some(s.name));
            assert!(s.soil.n > 0.0 && s.soil.n < 3.0, "{}", s.name);
            assert!(s.soil.shear_modulus_m > 0.0);
        }
        assert!(named_soil("quicksand").is_none());
    }

    #[test]
    fn thrust_rises_with_slip_towards_the_maximum() {
        let soil = named_soil("dry-sand").unwrap().soil;
        let wheel = WheelGeom {
            diameter_m: 0.3,
            width_m: 0.12,
        };
        let z = sinkage_m(&soil, wheel, 200.0);
        let c = Contact::of_wheel(wheel, 200.0, z);
        let mut last = 0.0;
        for k in 1..=20 {
            let f = thrust_n(&soil, &c, k as f64 * 0.05);
            assert!(f > last && f < max_thrust_n(&soil, &c));
            last = f;
        }
        let i = slip_for_thrust(&soil, &c, 0.5 * last, 1.0).unwrap();
        assert!((thrust_n(&soil, &c, i) - 0.5 * last).abs() < 1e-9 * last);
        assert!(slip_for_thrust(&soil, &c, 2.0 * last, 1.0).is_none());
    }
}
