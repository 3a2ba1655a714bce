//! A sweep's heatmap as PNG or SVG bytes: the lowest state of charge over two varied
//! keys, one cell per pair of values, with the feasibility boundary drawn as a thick
//! line along the cell edges that separate feasible from infeasible cases, and
//! infeasible cells crossed out (so the picture reads without colour too).
//!
//! Colours: a perceptually ordered ramp from dark violet (0 % state of charge) through
//! blue and green to yellow (100 %), the viridis map's end points and three inner stops
//! (van der Walt and Smith, matplotlib's default colour map since 2.0; values from
//! memory, linearly interpolated). Cells without a value are light grey.
//!
//! Pure: the chart in, bytes out; the same chart gives the same bytes.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::FontStyle;

use crate::report::plot::{draw_err, encode_png, register_fonts, PlotError, Ticked, FAMILY};

/// One cell of the map.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cell {
    /// Column (index into `x_ticks`).
    pub col: usize,
    /// Row (index into `y_ticks`, bottom up).
    pub row: usize,
    /// Lowest state of charge, fraction (NaN: no value).
    pub min_soc: f64,
    /// Whether the case is feasible.
    pub feasible: bool,
}

/// A heatmap over two keys.
#[derive(Debug, Clone, PartialEq)]
pub struct Heatmap {
    /// Title.
    pub title: String,
    /// X axis label (the first key).
    pub x_label: String,
    /// Y axis label (the second key).
    pub y_label: String,
    /// The x values' labels, left to right.
    pub x_ticks: Vec<String>,
    /// The y values' labels, bottom to top.
    pub y_ticks: Vec<String>,
    /// The cells (any order; a missing cell is drawn grey).
    pub cells: Vec<Cell>,
    /// Image size, pixels.
    pub size_px: (u32, u32),
}

const STOPS: [[f64; 3]; 5] = [
    [68.0, 1.0, 84.0],
    [59.0, 82.0, 139.0],
    [33.0, 145.0, 140.0],
    [94.0, 201.0, 98.0],
    [253.0, 231.0, 37.0],
];

/// The colour of a state of charge (module doc).
pub fn ramp(soc: f64) -> RGBColor {
    if !soc.is_finite() {
        return RGBColor(225, 225, 225);
    }
    let t = soc.clamp(0.0, 1.0) * (STOPS.len() - 1) as f64;
    let i = (t.floor() as usize).min(STOPS.len() - 2);
    let f = t - i as f64;
    let c = |k: usize| (STOPS[i][k] + f * (STOPS[i + 1][k] - STOPS[i][k])).round() as u8;
    RGBColor(c(0), c(1), c(2))
}

fn check(h: &Heatmap) -> Result<(u32, u32), PlotError> {
    if h.x_ticks.is_empty() || h.y_ticks.is_empty() {
        return Err(PlotError::Chart {
            detail: "a heatmap needs at least one value on each axis".into(),
            fix: "vary two keys",
        });
    }
    if h.cells
        .iter()
        .any(|c| c.col >= h.x_ticks.len() || c.row >= h.y_ticks.len())
    {
        return Err(PlotError::Chart {
            detail: "a cell lies outside the axes".into(),
            fix: "give cells within the ticks",
        });
    }
    let (lo, hi) = crate::report::plot::SIDE_RANGE_PX;
    let (w, hgt) = h.size_px;
    if !(lo..=hi).contains(&w) || !(lo..=hi).contains(&hgt) {
        return Err(PlotError::Chart {
            detail: format!("size {w} x {hgt} px is outside {lo} to {hi} px a side"),
            fix: "choose a size such as 1100 x 800",
        });
    }
    Ok((w, hgt))
}

/// Renders the heatmap as PNG bytes.
pub fn render_png(h: &Heatmap) -> Result<Vec<u8>, PlotError> {
    let (w, hgt) = check(h)?;
    let mut rgb = vec![0u8; w as usize * hgt as usize * 3];
    {
        let root = BitMapBackend::with_buffer(&mut rgb, (w, hgt)).into_drawing_area();
        draw(&root, h)?;
        root.present().map_err(draw_err)?;
    }
    encode_png(&rgb, w, hgt)
}

/// Renders the heatmap as SVG text.
pub fn render_svg(h: &Heatmap) -> Result<String, PlotError> {
    let (w, hgt) = check(h)?;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (w, hgt)).into_drawing_area();
        draw(&root, h)?;
        root.present().map_err(draw_err)?;
    }
    Ok(svg)
}

/// Ticks at the centres of every `k`-th of `n` cells, so that at most about 12 show
/// (never on the cell edges).
fn cell_ticks(n: usize) -> Vec<f64> {
    let every = n.div_ceil(12).max(1);
    (0..n).step_by(every).map(|i| i as f64).collect()
}

/// The label of the cell whose centre is at `v` (a tick of [`cell_ticks`]).
fn thin(labels: &[String], v: f64) -> String {
    let i = v.round();
    if (v - i).abs() > 1e-6 || i < 0.0 || i as usize >= labels.len() {
        return String::new();
    }
    labels[i as usize].clone()
}

fn draw<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, h: &Heatmap) -> Result<(), PlotError> {
    register_fonts()?;
    root.fill(&WHITE).map_err(draw_err)?;
    let base = (h.size_px.1 as f64 / 800.0).clamp(0.6, 3.0);
    let font = |pt: f64| (FAMILY, pt * base);
    let (bar_w, _) = root.dim_in_pixel();
    let bar_px = (110.0 * base) as u32;
    let (main, bar) = root.split_horizontally(bar_w.saturating_sub(bar_px));
    let (nx, ny) = (h.x_ticks.len(), h.y_ticks.len());
    let mut chart = ChartBuilder::on(&main)
        .caption(&h.title, (FAMILY, 22.0 * base, FontStyle::Bold))
        .margin((14.0 * base) as u32)
        .x_label_area_size((56.0 * base) as u32)
        .y_label_area_size((86.0 * base) as u32)
        .build_cartesian_2d(
            Ticked::new(-0.5, nx as f64 - 0.5, cell_ticks(nx)),
            Ticked::new(-0.5, ny as f64 - 0.5, cell_ticks(ny)),
        )
        .map_err(draw_err)?;
    let fx = |v: &f64| thin(&h.x_ticks, *v);
    let fy = |v: &f64| thin(&h.y_ticks, *v);
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc(h.x_label.as_str())
        .y_desc(h.y_label.as_str())
        .x_label_formatter(&fx)
        .y_label_formatter(&fy)
        .label_style(font(13.0))
        .axis_desc_style(font(16.0))
        .draw()
        .map_err(draw_err)?;
    let mut grid: Vec<Option<Cell>> = vec![None; nx * ny];
    for c in &h.cells {
        grid[c.row * nx + c.col] = Some(*c);
    }
    let at = |col: usize, row: usize| grid[row * nx + col];
    let rect = |col: usize, row: usize, soc: f64| {
        let (x, y) = (col as f64, row as f64);
        Rectangle::new([(x - 0.5, y - 0.5), (x + 0.5, y + 0.5)], ramp(soc).filled())
    };
    chart
        .draw_series(
            (0..ny)
                .flat_map(|r| (0..nx).map(move |c| (c, r)))
                .map(|(c, r)| rect(c, r, at(c, r).map_or(f64::NAN, |x| x.min_soc))),
        )
        .map_err(draw_err)?;
    // Crosses on infeasible cells.
    let cross = WHITE
        .mix(0.85)
        .stroke_width((1.5 * base).round().max(1.0) as u32);
    // Square crosses whatever the cells' shape: half-arms of 0.22 of the shorter cell
    // side, in each axis's cells.
    let (pw, ph) = chart.plotting_area().dim_in_pixel();
    let (cw, ch) = (f64::from(pw) / nx as f64, f64::from(ph) / ny as f64);
    let arm = 0.22 * cw.min(ch);
    let (dx, dy) = (arm / cw.max(1.0), arm / ch.max(1.0));
    for c in h.cells.iter().filter(|c| !c.feasible) {
        let (x, y) = (c.col as f64, c.row as f64);
        chart
            .draw_series([
                PathElement::new(vec![(x - dx, y - dy), (x + dx, y + dy)], cross),
                PathElement::new(vec![(x - dx, y + dy), (x + dx, y - dy)], cross),
            ])
            .map_err(draw_err)?;
    }
    // The feasibility boundary: edges between a feasible and an infeasible neighbour.
    let edge = BLACK.stroke_width((3.5 * base).round().max(2.0) as u32);
    let feasible = |col: usize, row: usize| at(col, row).is_some_and(|c| c.feasible);
    let mut edges = Vec::new();
    for r in 0..ny {
        for c in 0..nx {
            if c + 1 < nx && feasible(c, r) != feasible(c + 1, r) {
                let x = c as f64 + 0.5;
                edges.push(vec![(x, r as f64 - 0.5), (x, r as f64 + 0.5)]);
            }
            if r + 1 < ny && feasible(c, r) != feasible(c, r + 1) {
                let y = r as f64 + 0.5;
                edges.push(vec![(c as f64 - 0.5, y), (c as f64 + 0.5, y)]);
            }
        }
    }
    chart
        .draw_series(edges.into_iter().map(|e| PathElement::new(e, edge)))
        .map_err(draw_err)?;
    draw_bar(&bar, base)
}

/// The colour bar: lowest state of charge 0 to 100 %, and the legend of the marks.
fn draw_bar<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, base: f64) -> Result<(), PlotError> {
    let mut chart = ChartBuilder::on(area)
        .margin_top((60.0 * base) as u32)
        .margin_bottom((70.0 * base) as u32)
        .margin_right((10.0 * base) as u32)
        .y_label_area_size((50.0 * base) as u32)
        .build_cartesian_2d(0.0..1.0, 0.0..100.0)
        .map_err(draw_err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_desc("min SOC (%)")
        .y_labels(6)
        .y_label_formatter(&|v| format!("{v:.0}"))
        .label_style((FAMILY, 13.0 * base))
        .axis_desc_style((FAMILY, 14.0 * base))
        .draw()
        .map_err(draw_err)?;
    chart
        .draw_series((0..100).map(|i| {
            let y = i as f64;
            Rectangle::new([(0.0, y), (1.0, y + 1.0)], ramp((y + 0.5) / 100.0).filled())
        }))
        .map_err(draw_err)?;
    let (_, h) = area.dim_in_pixel();
    let text = TextStyle::from((FAMILY, 12.0 * base).into_font());
    area.draw_text("× infeasible", &text, (4, h as i32 - (50.0 * base) as i32))
        .map_err(draw_err)?;
    area.draw_text("━ boundary", &text, (4, h as i32 - (30.0 * base) as i32))
        .map_err(draw_err)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Ticks sit on cell centres (whole indices), never on the edges between cells, and
    /// at most 12 show, evenly spaced from the first cell.
    #[test]
    fn ticks_sit_on_cell_centres() {
        assert_eq!(cell_ticks(10), (0..10).map(f64::from).collect::<Vec<_>>());
        assert_eq!(
            cell_ticks(25),
            vec![0.0, 3.0, 6.0, 9.0, 12.0, 15.0, 18.0, 21.0, 24.0]
        );
        assert_eq!(cell_ticks(1), vec![0.0]);
        let labels: Vec<String> = (0..25).map(|i| format!("{i}")).collect();
        assert_eq!(thin(&labels, 3.0), "3");
        assert_eq!(thin(&labels, 2.5), "");
    }

    #[test]
    fn ramp_runs_from_violet_to_yellow() {
        assert_eq!(ramp(0.0), RGBColor(68, 1, 84));
        assert_eq!(ramp(1.0), RGBColor(253, 231, 37));
        assert_eq!(ramp(2.0), ramp(1.0));
        assert_eq!(ramp(f64::NAN), RGBColor(225, 225, 225));
    }

    #[test]
    fn renders_and_refuses_empty_axes() {
        let h = Heatmap {
            title: "t".into(),
            x_label: "x".into(),
            y_label: "y".into(),
            x_ticks: vec!["1".into(), "2".into()],
            y_ticks: vec!["a".into(), "b".into(), "c".into()],
            cells: (0..6)
                .map(|i| Cell {
                    col: i % 2,
                    row: i / 2,
                    min_soc: i as f64 / 6.0,
                    feasible: i > 2,
                })
                .collect(),
            size_px: (800, 600),
        };
        let png = render_png(&h).unwrap();
        assert_eq!(&png[1..4], b"PNG");
        let svg = render_svg(&h).unwrap();
        assert!(svg.contains("min SOC"));
        let mut e = h.clone();
        e.x_ticks.clear();
        assert!(render_png(&e).is_err());
    }
}
