//! Errors of the planning stage: each names the point, what is wrong and the fix.

use crate::plan::astar::Unreachable;
use crate::plan::cost::Blocked;

/// Everything that can stop a route from being planned.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanError {
    /// A route point lies outside the grid.
    #[error(
        "the {what} ({x}, {y}) lies outside the terrain, which covers x {x0} .. {x1} and \
         y {y0} .. {y1} (in the DEM's CRS units). Fix: give a point inside the terrain"
    )]
    Outside {
        /// "start", "goal", "waypoint 2".
        what: String,
        /// Map x.
        x: f64,
        /// Map y.
        y: f64,
        /// Western edge.
        x0: f64,
        /// Eastern edge.
        x1: f64,
        /// Southern edge.
        y0: f64,
        /// Northern edge.
        y1: f64,
    },
    /// A route point lies on a blocked cell.
    #[error("the {what} ({x}, {y}) lies on a cell blocked by the {}. Fix: move the point", why.describe())]
    OnBlockedCell {
        /// "start", "goal", "waypoint 2".
        what: String,
        /// Map x.
        x: f64,
        /// Map y.
        y: f64,
        /// Why the cell is blocked.
        why: Blocked,
    },
    /// No drivable path between two points.
    #[error("{}", unreachable_message(from, to, detail, *nearest_xy, *names))]
    Unreachable {
        /// Label of the leg's start.
        from: String,
        /// Label of the leg's end.
        to: String,
        /// What the search found.
        detail: Unreachable,
        /// Map coordinates of the reachable cell nearest the goal.
        nearest_xy: (f64, f64),
        /// Whose names the fix uses for the limits.
        names: LimitNames,
    },
}

/// Where the user sets the planner's limits: the names the fix of an unreachable goal
/// gives them.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum LimitNames {
    /// The `route` command's flags (`--max-pitch-deg`, ...).
    #[default]
    RouteFlags,
    /// A mission file's keys (`[route] max_climb_deg`, ...).
    MissionKeys,
}

impl PlanError {
    /// The same error, its fix naming the limits by `names`.
    pub fn with_limit_names(self, names: LimitNames) -> Self {
        match self {
            PlanError::Unreachable {
                from,
                to,
                detail,
                nearest_xy,
                ..
            } => PlanError::Unreachable {
                from,
                to,
                detail,
                nearest_xy,
                names,
            },
            e => e,
        }
    }
}

/// The flag or key that relaxes `b`, where there is one.
fn limit_knob(b: Blocked, names: LimitNames) -> Option<&'static str> {
    match names {
        LimitNames::RouteFlags => match b {
            Blocked::PitchUp | Blocked::PitchDown => Some("--max-pitch-deg"),
            Blocked::Roll => Some("--max-roll-deg"),
            Blocked::Roughness => Some("--max-roughness-m"),
            Blocked::KeepOut => Some("--keep-out"),
            Blocked::Traction | Blocked::Sinkage => Some("the rover file's soil and wheel keys"),
            Blocked::NoData | Blocked::GridEdge => None,
        },
        LimitNames::MissionKeys => match b {
            Blocked::PitchUp => Some("[route] max_climb_deg"),
            Blocked::PitchDown => Some("[route] max_descent_deg"),
            Blocked::Roll => Some("[route] max_roll_deg"),
            Blocked::Traction => Some("[rover] ground_friction, max_slip or soil"),
            Blocked::Sinkage => Some("[rover] wheel_radius_m, wheel_width_m or soil"),
            Blocked::KeepOut => Some("[terrain] keep_out"),
            Blocked::Roughness | Blocked::NoData | Blocked::GridEdge => None,
        },
    }
}

fn unreachable_message(
    from: &str,
    to: &str,
    u: &Unreachable,
    nearest: (f64, f64),
    names: LimitNames,
) -> String {
    let total: u64 = u.closed_by.iter().map(|(_, c)| c).sum();
    let reasons: Vec<String> = u
        .closed_by
        .iter()
        .map(|(b, c)| {
            let pct = 100.0 * *c as f64 / total.max(1) as f64;
            if pct < 0.5 {
                format!("{} (under 1 %)", b.describe())
            } else {
                format!("{} ({pct:.0} %)", b.describe())
            }
        })
        .collect();
    let closed = if reasons.is_empty() {
        "nothing leads out of the start cell".to_string()
    } else {
        format!("the way is closed by the {}", reasons.join(", "))
    };
    let reached = if u.reached == 1 {
        format!("the one cell the rover can reach (the {from} itself)")
    } else {
        format!("the {} cells the rover can reach", u.reached)
    };
    let relax = match u.closed_by.first().and_then(|(b, _)| limit_knob(*b, names)) {
        Some(knob) => format!("relax the limit named first ({knob})"),
        None => "relax the limit named first".to_string(),
    };
    let sixteen = match names {
        LimitNames::RouteFlags => "--connectivity 16",
        LimitNames::MissionKeys => "[route] connectivity = 16",
    };
    format!(
        "no drivable route from the {from} to the {to}: {closed}, counting the steps out of \
         {reached}. The reachable cell nearest the {to} is ({:.2}, {:.2}), {:.1} m from it. \
         Fix: {relax}, allow 16-connected steps ({sixteen}), or move the {to}",
        nearest.0, nearest.1, u.nearest.1
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn unreachable(reached: u64) -> String {
        unreachable_for(reached, LimitNames::RouteFlags)
    }

    fn unreachable_for(reached: u64, names: LimitNames) -> String {
        PlanError::Unreachable {
            names,
            from: "start".into(),
            to: "goal".into(),
            detail: Unreachable {
                closed_by: vec![(Blocked::PitchUp, 3), (Blocked::Roll, 1)],
                nearest: (7, 12.5),
                reached,
            },
            nearest_xy: (1.0, 2.0),
        }
        .to_string()
    }

    /// The message names the limits with their shares, the cells reached (one cell in
    /// the singular, as the start itself), the nearest cell and the fix.
    #[test]
    fn unreachable_names_the_limits_the_reach_and_the_fix() {
        let many = unreachable(40);
        assert!(many.contains("uphill pitch limit (75 %)"), "{many}");
        assert!(
            many.contains("out of the 40 cells the rover can reach"),
            "{many}"
        );
        assert!(many.contains("(1.00, 2.00), 12.5 m from it"), "{many}");
        assert!(many.contains("Fix: relax the limit named first"), "{many}");
        let one = unreachable(1);
        assert!(
            one.contains("out of the one cell the rover can reach (the start itself)"),
            "{one}"
        );
        assert!(!one.contains("1 cells"), "{one}");
    }

    /// The fix names the flag of the `route` command, or the mission file's key.
    #[test]
    fn the_fix_names_the_flag_or_the_mission_key() {
        let flags = unreachable_for(40, LimitNames::RouteFlags);
        assert!(
            flags.contains(
                "Fix: relax the limit named first (--max-pitch-deg), allow 16-connected steps \
                 (--connectivity 16), or move the goal"
            ),
            "{flags}"
        );
        let keys = unreachable_for(40, LimitNames::MissionKeys);
        assert!(
            keys.contains(
                "Fix: relax the limit named first ([route] max_climb_deg), allow 16-connected \
                 steps ([route] connectivity = 16), or move the goal"
            ),
            "{keys}"
        );
        assert!(!keys.contains("--"), "{keys}");
    }
}
