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
    #[error("{}", unreachable_message(from, to, detail, *nearest_xy))]
    Unreachable {
        /// Label of the leg's start.
        from: String,
        /// Label of the leg's end.
        to: String,
        /// What the search found.
        detail: Unreachable,
        /// Map coordinates of the reachable cell nearest the goal.
        nearest_xy: (f64, f64),
    },
}

fn unreachable_message(from: &str, to: &str, u: &Unreachable, nearest: (f64, f64)) -> String {
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
    format!(
        "no drivable route from the {from} to the {to}: {closed}, counting the steps out of \
         {reached}. The reachable cell nearest the {to} is ({:.2}, {:.2}), {:.1} m from it. \
         Fix: relax the limit named first (for example --max-pitch-deg), allow 16-connected \
         steps, or move the {to}",
        nearest.0, nearest.1, u.nearest.1
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn unreachable(reached: u64) -> String {
        PlanError::Unreachable {
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
}
