//! Rover descriptions from TOML: defaults, the `[rover]` table of a mission file, and
//! errors that name the key with its line and column.

use sunward::vehicle::{Rover, VehicleError};

fn problems(text: &str) -> String {
    match Rover::from_toml_str(text) {
        Err(e) => e.to_string(),
        Ok(r) => panic!("expected an error, got {r:?}"),
    }
}

#[test]
fn an_empty_file_is_the_documented_default_rover() {
    assert_eq!(Rover::from_toml_str("").unwrap(), Rover::default());
}

#[test]
fn stable_keys_and_extras_are_read_in_their_units() {
    let text = r#"
mass_kg = 200.0
payload_kg = 20.0
soil = "sandy-loam"
drive_efficiency = 0.8
regen_fraction = 0.2
hotel_power_w = 40.0
max_speed_m_s = 0.3
wheel_count = 4
max_roll_deg = 10.0
speed_law = "constant"
"#;
    let r = Rover::from_toml_str(text).unwrap();
    assert_eq!(r.total_mass_kg(), 220.0);
    assert_eq!(r.soil.map(|s| s.name), Some("sandy-loam"));
    assert_eq!(
        r.rolling_resistance, 0.0,
        "with a soil the default C_rr is zero"
    );
    assert!((r.max_roll_rad - 10f64.to_radians()).abs() < 1e-15);
    assert_eq!(r.wheel_layout().offsets_m().len(), 4);
}

#[test]
fn a_mission_files_rover_table_is_read_and_its_other_tables_left_alone() {
    let text = "[site]\nname = \"Kelder Flats\"\n\n[rover]\nmass_kg = 90.0\n";
    let r = Rover::from_toml_str(text).unwrap();
    assert_eq!(r.mass_kg, 90.0);
    let bad = "[site]\nname = \"Kelder Flats\"\n\n[rover]\nmass_kg = -1.0\n";
    let msg = problems(bad);
    assert!(
        msg.contains("line 5, column 11") && msg.contains("`mass_kg`"),
        "{msg}"
    );
}

#[test]
fn out_of_range_values_name_the_key_line_column_range_and_fix_all_at_once() {
    let text = "mass_kg = 120.0\ndrive_efficiency = 1.5\nmax_slip = 1.0\n";
    let msg = problems(text);
    assert!(
        msg.contains("line 2, column 20: rover key `drive_efficiency`: got 1.5"),
        "{msg}"
    );
    assert!(msg.contains("(0, 1]") && msg.contains("Fix:"), "{msg}");
    assert!(
        msg.contains("line 3, column 12: rover key `max_slip`"),
        "{msg}"
    );
}

#[test]
fn unknown_keys_and_wrong_types_are_parse_errors_with_a_position() {
    let e = Rover::from_toml_str("mass_kg = 10.0\nmas_kg = 3.0\n").unwrap_err();
    match &e {
        VehicleError::Parse {
            pos: Some(p),
            message,
            ..
        } => {
            assert_eq!(p.line, 2, "{e}");
            assert!(message.contains("mas_kg"), "{e}");
        }
        other => panic!("{other:?}"),
    }
    let msg = problems("mass_kg = \"heavy\"\n");
    assert!(msg.starts_with("line 1, column 11"), "{msg}");
}

#[test]
fn unknown_soil_and_speed_law_list_the_choices() {
    let msg = problems("soil = \"quicksand\"\nspeed_law = \"brisk\"\n");
    assert!(
        msg.contains("`soil`") && msg.contains("dry-sand") && msg.contains("regolith-simulant"),
        "{msg}"
    );
    assert!(
        msg.contains("line 2, column 13: rover key `speed_law`"),
        "{msg}"
    );
}

#[test]
fn geometry_is_checked_across_keys() {
    let msg = problems(
        "wheel_count = 5\nwheel_radius_m = 0.5\ntrack_m = 0.8\ncg_forward_offset_m = 0.6\n",
    );
    assert!(msg.contains("`wheel_count`: got 5"), "{msg}");
    assert!(
        msg.contains("`wheel_radius_m`") && msg.contains("`cg_forward_offset_m`"),
        "{msg}"
    );
    assert!(problems("wheel_count = -2\n").contains("line 1"));
}

#[test]
fn an_efficiency_table_is_checked_and_used() {
    let text = r#"
[efficiency_table]
speeds_m_s = [0.1, 0.5]
torques_nm = [0.0, 20.0]
efficiency = [[0.5, 0.5], [0.5, 0.5]]
"#;
    let r = Rover::from_toml_str(text).unwrap();
    let c = r.step_cost_on_grade(1.0, 0.0);
    // W = 135 × 9.806 65 × 0.08 = 105.911 82 J at η 0.5 → 211.823 64 J.
    assert!(
        (c.drive_energy_j - 211.82364).abs() < 1e-6,
        "{}",
        c.drive_energy_j
    );
    let bad =
        "[efficiency_table]\nspeeds_m_s = [0.5, 0.1]\ntorques_nm = [1.0]\nefficiency = [[0.5]]\n";
    let msg = problems(bad);
    assert!(
        msg.contains("`efficiency_table.speeds_m_s`") && msg.contains("line 1"),
        "{msg}"
    );
}
