//! Line charts as PNG or SVG bytes: the plotting foundation of sunward's reports.
//!
//! A [`LineChart`] holds a title, an x axis (numbers, or instants shown in a stated UTC
//! offset), a left y axis and an optional right one (e.g. state of charge 0-100 %
//! beside power in W), any number of line series with a legend, and shaded x bands
//! (night). [`render_png`] and [`render_svg`] are pure: chart in, bytes out; the caller
//! writes them (through `report::atomic`).
//!
//! Drawing is done by the `plotters` crate. Text is laid out with DejaVu Sans, embedded
//! in the binary (the `dejavu` crate) and registered with plotters before the first
//! chart, so charts render the same on machines without any installed font. PNG bytes
//! are encoded here with the `png` crate from plotters' RGB buffer. The same chart gives
//! the same bytes every time (no clock, no randomness).
//!
//! Time axes: x values are seconds since 1970-01-01T00:00:00Z; ticks fall a whole number
//! of steps (1, 2, 3, 6 or 12 hours, or 1, 2, 7, 14, 28, ... days) from the local
//! midnight of the first point, at most 16 of them, and are labelled `HH:MM` (with the
//! date when the span exceeds two days, the date alone for steps of whole days) in the
//! chart's UTC offset, which the axis label should name (e.g. "time (UTC+02:00)").
//!
//! # Units
//! Sizes in pixels; x and y values in the units their axis labels name; times in
//! seconds since the Unix epoch; UTC offsets in seconds east of UTC.

use std::sync::OnceLock;

use chrono::{DateTime, FixedOffset, Offset, Utc};
use plotters::chart::DualCoordChartContext;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint};
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::{register_font, FontStyle};

/// Font family name the embedded DejaVu Sans is registered under (plotters' default).
pub(crate) const FAMILY: &str = "sans-serif";

/// Smallest and largest image side accepted, pixels.
pub const SIDE_RANGE_PX: (u32, u32) = (200, 8000);

/// Errors of chart rendering.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlotError {
    /// The chart description cannot be drawn.
    #[error("chart: {detail}. Fix: {fix}")]
    Chart {
        /// What is wrong.
        detail: String,
        /// What the caller can do.
        fix: &'static str,
    },
    /// The drawing library or the PNG encoder failed (a bug, not a user error).
    #[error("chart drawing failed: {0}")]
    Draw(String),
}

fn chart_err(detail: String, fix: &'static str) -> PlotError {
    PlotError::Chart { detail, fix }
}

pub(crate) fn draw_err(e: impl std::fmt::Display) -> PlotError {
    PlotError::Draw(e.to_string())
}

/// What the x values mean.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum XKind {
    /// Plain numbers.
    Numeric,
    /// Seconds since the Unix epoch, labelled as clock times in this UTC offset.
    Time {
        /// Offset of the labels, seconds east of UTC (0 for UTC).
        utc_offset_s: i32,
    },
}

/// One y axis.
#[derive(Debug, Clone, PartialEq)]
pub struct YAxis {
    /// Label with unit, e.g. "irradiance (W/m2)".
    pub label: String,
    /// Fixed range (low, high); `None` fits the data of the series on this axis.
    pub range: Option<(f64, f64)>,
}

/// Which y axis a series belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Side {
    /// The left axis.
    #[default]
    Left,
    /// The right (second) axis.
    Right,
}

/// One line series.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Legend text.
    pub name: String,
    /// (x, y) points in x order; non-finite y breaks the line.
    pub points: Vec<(f64, f64)>,
    /// Axis the y values belong to.
    pub side: Side,
    /// RGB colour; `None` takes the next colour of [`PALETTE`].
    pub color: Option<[u8; 3]>,
}

/// A shaded x range across the plot (e.g. night).
#[derive(Debug, Clone, PartialEq)]
pub struct Band {
    /// Start and end x.
    pub x_range: (f64, f64),
    /// Legend text; bands with the same label share one legend entry.
    pub label: Option<String>,
}

/// A complete line chart.
#[derive(Debug, Clone, PartialEq)]
pub struct LineChart {
    /// Title at the top.
    pub title: String,
    /// x axis label with unit (and, for times, the zone).
    pub x_label: String,
    /// What x means.
    pub x_kind: XKind,
    /// Left y axis.
    pub y_left: YAxis,
    /// Right y axis, if any series uses [`Side::Right`].
    pub y_right: Option<YAxis>,
    /// The lines.
    pub series: Vec<Series>,
    /// Shaded x ranges, drawn under the lines.
    pub bands: Vec<Band>,
    /// Image width and height, pixels.
    pub size_px: (u32, u32),
}

/// Line colours in order: the Okabe-Ito palette for colour-blind readers (common
/// practice; values from memory), black last.
pub const PALETTE: [[u8; 3]; 7] = [
    [230, 159, 0],
    [0, 114, 178],
    [0, 158, 115],
    [213, 94, 0],
    [204, 121, 167],
    [86, 180, 233],
    [0, 0, 0],
];

/// The colour of series `i` of `n` without a colour of its own: [`PALETTE`] when it
/// has enough entries, else `n` hues evenly spaced around the colour wheel (HSV with
/// saturation 0.85 and value 0.8; common practice for many categories, such as the
/// months of a year, whose order is cyclic), so that no two series share a colour.
pub fn auto_color(i: usize, n: usize) -> [u8; 3] {
    if n <= PALETTE.len() {
        return PALETTE[i % PALETTE.len()];
    }
    let h = 6.0 * (i % n) as f64 / n as f64;
    let (s, v) = (0.85, 0.8);
    let f = h - h.floor();
    let (p, q, t) = (v * (1.0 - s), v * (1.0 - s * f), v * (1.0 - s * (1.0 - f)));
    let (r, g, b) = match h.floor() as u32 {
        0 => (v, t, p),
        1 => (q, v, p),
        2 => (p, v, t),
        3 => (p, q, v),
        4 => (t, p, v),
        _ => (v, p, q),
    };
    [r, g, b].map(|x| (255.0 * x).round() as u8)
}

/// Fill of bands: a light blue-grey, drawn under the grid and the lines.
const BAND_RGB: [u8; 3] = [205, 212, 228];

pub(crate) fn register_fonts() -> Result<(), PlotError> {
    static DONE: OnceLock<bool> = OnceLock::new();
    let ok = *DONE.get_or_init(|| {
        register_font(FAMILY, FontStyle::Normal, dejavu::sans::regular()).is_ok()
            && register_font(FAMILY, FontStyle::Bold, dejavu::sans::bold()).is_ok()
    });
    if ok {
        Ok(())
    } else {
        Err(PlotError::Draw("the embedded font did not load".into()))
    }
}

/// Renders the chart as PNG bytes (8-bit RGB).
pub fn render_png(chart: &LineChart) -> Result<Vec<u8>, PlotError> {
    let (w, h) = check(chart)?;
    let mut rgb = vec![0u8; w as usize * h as usize * 3];
    {
        let root = BitMapBackend::with_buffer(&mut rgb, (w, h)).into_drawing_area();
        draw(&root, chart)?;
        root.present().map_err(draw_err)?;
    }
    encode_png(&rgb, w, h)
}

/// Renders the chart as SVG text.
pub fn render_svg(chart: &LineChart) -> Result<String, PlotError> {
    let (w, h) = check(chart)?;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (w, h)).into_drawing_area();
        draw(&root, chart)?;
        root.present().map_err(draw_err)?;
    }
    Ok(svg)
}

pub(crate) fn encode_png(rgb: &[u8], w: u32, h: u32) -> Result<Vec<u8>, PlotError> {
    let mut out = Vec::new();
    crate::terrain::io::png::write_rgb8(&mut out, w as usize, h as usize, rgb).map_err(draw_err)?;
    Ok(out)
}

fn check(c: &LineChart) -> Result<(u32, u32), PlotError> {
    let (lo, hi) = SIDE_RANGE_PX;
    let (w, h) = c.size_px;
    if !(lo..=hi).contains(&w) || !(lo..=hi).contains(&h) {
        return Err(chart_err(
            format!("size {w} x {h} px is outside {lo} to {hi} px a side"),
            "choose a size such as 1200 x 700",
        ));
    }
    if c.y_right.is_none() && c.series.iter().any(|s| s.side == Side::Right) {
        return Err(chart_err(
            "a series is on the right axis but the chart has none".into(),
            "give the chart a right y axis or put the series on the left",
        ));
    }
    if let XKind::Time { utc_offset_s } = c.x_kind {
        if utc_offset_s.abs() >= 86_400 {
            return Err(chart_err(
                format!("UTC offset {utc_offset_s} s is a day or more"),
                "give the offset in seconds east of UTC, e.g. 7200 for UTC+02:00",
            ));
        }
    }
    if x_extent(c).is_none() {
        return Err(chart_err(
            "no finite point to draw".into(),
            "give at least one series with finite points",
        ));
    }
    Ok((w, h))
}

/// Smallest and largest finite x over series and bands.
fn x_extent(c: &LineChart) -> Option<(f64, f64)> {
    let xs = c
        .series
        .iter()
        .flat_map(|s| s.points.iter().filter(|p| p.1.is_finite()).map(|p| p.0))
        .chain(c.bands.iter().flat_map(|b| [b.x_range.0, b.x_range.1]))
        .filter(|x| x.is_finite());
    fold_extent(xs)
}

/// The smallest x of the series' finite points (bands left out).
fn first_point_x(c: &LineChart) -> Option<f64> {
    c.series
        .iter()
        .flat_map(|s| s.points.iter())
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .map(|p| p.0)
        .reduce(f64::min)
}

fn fold_extent(values: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    values.fold(None, |acc, v| match acc {
        None => Some((v, v)),
        Some((lo, hi)) => Some((lo.min(v), hi.max(v))),
    })
}

/// The y range of one axis: fixed, or the data's with 5 % headroom (0 kept as the
/// floor when all data are non-negative, so irradiance and power start at zero).
fn y_range(c: &LineChart, axis: Option<&YAxis>, side: Side) -> (f64, f64) {
    if let Some((lo, hi)) = axis.and_then(|a| a.range) {
        return widen(lo, hi);
    }
    let ys = c
        .series
        .iter()
        .filter(|s| s.side == side)
        .flat_map(|s| s.points.iter().map(|p| p.1))
        .filter(|y| y.is_finite());
    let (lo, hi) = fold_extent(ys).unwrap_or((0.0, 1.0));
    // Flat data (a day of polar night's zero power) get a range of their own size, at
    // least 1, rather than a sliver that labels every tick with the same number.
    let flat = hi - lo <= 1e-9 * lo.abs().max(hi.abs()).max(1.0);
    let pad = if flat {
        (0.5 * lo.abs()).max(1.0)
    } else {
        0.05 * (hi - lo)
    };
    let lo = if lo >= 0.0 { 0.0 } else { lo - pad };
    widen(lo, hi + pad)
}

fn widen(lo: f64, hi: f64) -> (f64, f64) {
    if hi > lo {
        (lo, hi)
    } else {
        (lo - 0.5, lo + 0.5)
    }
}

/// Maps x values to the plotted coordinate: hours since the local midnight before the
/// first value for time axes (so ticks land on whole hours), the value itself otherwise.
#[derive(Debug, Clone, Copy)]
struct XMap {
    kind: XKind,
    origin_s: f64,
}

impl XMap {
    fn new(kind: XKind, x_min: f64) -> XMap {
        let origin_s = match kind {
            XKind::Numeric => 0.0,
            XKind::Time { utc_offset_s } => {
                let local = x_min + f64::from(utc_offset_s);
                (local / 86_400.0).floor() * 86_400.0 - f64::from(utc_offset_s)
            }
        };
        XMap { kind, origin_s }
    }

    fn to_plot(self, x: f64) -> f64 {
        match self.kind {
            XKind::Numeric => x,
            XKind::Time { .. } => (x - self.origin_s) / 3600.0,
        }
    }

    /// The label of tick `v` for ticks `step_h` hours apart (time axes): the date alone
    /// for whole-day steps, with the clock time when the span exceeds two days, the
    /// clock time alone otherwise.
    fn label(self, v: f64, step_h: f64, span: f64) -> String {
        let XKind::Time { utc_offset_s } = self.kind else {
            return format_number(v);
        };
        let secs = (self.origin_s + v * 3600.0).round() as i64;
        let off = FixedOffset::east_opt(utc_offset_s).unwrap_or(Utc.fix());
        let t = DateTime::from_timestamp(secs, 0)
            .unwrap_or_default()
            .with_timezone(&off);
        if step_h >= 24.0 {
            t.format("%m-%d").to_string()
        } else if span > 48.0 {
            t.format("%m-%d %H:%M").to_string()
        } else {
            t.format("%H:%M").to_string()
        }
    }

    /// The x ticks over the plotted range `px0..px1` and their spacing in hours (0 for
    /// numeric axes). Numeric axes: plotters' own choice for about 13 ticks. Time axes:
    /// at most [`MAX_TIME_TICKS`] ticks a whole number of steps from the local midnight
    /// of `first` (the first data point's plotted x), the step the smallest of 1, 2, 3,
    /// 6 and 12 hours and 1, 2, 7, 14, 28, 56, ... days that keeps to that count, so
    /// that ticks fall on whole hours or local midnights, and on a date sweep's case
    /// dates when the cases are a week or two apart.
    fn ticks(self, px0: f64, px1: f64, first: f64) -> (Vec<f64>, f64) {
        if let XKind::Numeric = self.kind {
            let inner = RangedCoordf64::from(px0..px1);
            return (inner.key_points(13), 0.0);
        }
        let span = px1 - px0;
        let mut step = 0.0;
        for s in [1.0, 2.0, 3.0, 6.0, 12.0, 24.0, 48.0] {
            if span / s <= MAX_TIME_TICKS as f64 {
                step = s;
                break;
            }
        }
        if step == 0.0 {
            step = 168.0;
            while span / step > MAX_TIME_TICKS as f64 {
                step *= 2.0;
            }
        }
        let anchor = (first / 24.0).floor() * 24.0;
        let k0 = ((px0 - anchor) / step).ceil() as i64;
        let k1 = ((px1 - anchor) / step).floor() as i64;
        ((k0..=k1).map(|k| anchor + k as f64 * step).collect(), step)
    }
}

/// The most ticks a time axis gets.
const MAX_TIME_TICKS: usize = 16;

fn format_number(v: f64) -> String {
    let s = format!("{v:.3}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.into()
    }
}

fn rgb(c: [u8; 3]) -> RGBColor {
    RGBColor(c[0], c[1], c[2])
}

/// Splits points into runs of finite y (a non-finite y breaks the line).
fn runs(points: &[(f64, f64)], map: XMap) -> Vec<Vec<(f64, f64)>> {
    let mut out: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
    for &(x, y) in points {
        if x.is_finite() && y.is_finite() {
            if let Some(last) = out.last_mut() {
                last.push((map.to_plot(x), y));
            }
        } else if out.last().is_some_and(|r| !r.is_empty()) {
            out.push(Vec::new());
        }
    }
    out.retain(|r| !r.is_empty());
    out
}

type Plane2d = Cartesian2d<Ticked, RangedCoordf64>;

/// An f64 axis with the ticks given ([`XMap::ticks`]) and light grid lines between them.
/// (plotters' own key-point combinator keeps the f64 axis's format option, which has no
/// formatter for a chart's mesh; this one formats by the label formatter given.)
#[derive(Clone)]
pub(crate) struct Ticked {
    inner: RangedCoordf64,
    bold: Vec<f64>,
    light: Vec<f64>,
}

impl Ticked {
    /// An axis over `px0..px1` with ticks at `bold`.
    pub(crate) fn new(px0: f64, px1: f64, bold: Vec<f64>) -> Ticked {
        let light = bold.windows(2).map(|w| 0.5 * (w[0] + w[1])).collect();
        Ticked {
            inner: (px0..px1).into(),
            bold,
            light,
        }
    }
}

impl Ranged for Ticked {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.inner.map(value, limit)
    }

    fn key_points<H: KeyPointHint>(&self, hint: H) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.light.clone()
        } else {
            self.bold.clone()
        }
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.inner.range()
    }
}
type Dual<'a, DB> = DualCoordChartContext<'a, DB, Plane2d, Plane2d>;

fn draw<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, c: &LineChart) -> Result<(), PlotError> {
    register_fonts()?;
    root.fill(&WHITE).map_err(draw_err)?;
    let (x0, x1) = x_extent(c).map(|(a, b)| widen(a, b)).unwrap_or((0.0, 1.0));
    let map = XMap::new(c.x_kind, x0);
    let (px0, px1) = (map.to_plot(x0), map.to_plot(x1));
    let (yl0, yl1) = y_range(c, Some(&c.y_left), Side::Left);
    let (yr0, yr1) = y_range(c, c.y_right.as_ref(), Side::Right);
    let base = (c.size_px.1 as f64 / 700.0).clamp(0.6, 3.0);
    let font = |pt: f64| (FAMILY, pt * base);
    let first = first_point_x(c).map_or(px0, |x| map.to_plot(x));
    let (ticks, step_h) = map.ticks(px0, px1, first);
    let x_axis = Ticked::new(px0, px1, ticks);
    let mut chart = ChartBuilder::on(root)
        .caption(&c.title, (FAMILY, 24.0 * base, FontStyle::Bold))
        .margin((14.0 * base) as u32)
        .x_label_area_size((56.0 * base) as u32)
        .y_label_area_size((76.0 * base) as u32)
        .right_y_label_area_size(if c.y_right.is_some() {
            (76.0 * base) as u32
        } else {
            0
        })
        .build_cartesian_2d(x_axis.clone(), yl0..yl1)
        .map_err(draw_err)?
        .set_secondary_coord(x_axis, yr0..yr1);
    draw_bands(&mut chart, c, map, (yl0, yl1))?;
    let span = px1 - px0;
    let fmt = move |v: &f64| map.label(*v, step_h, span);
    chart
        .configure_mesh()
        .x_desc(c.x_label.as_str())
        .y_desc(c.y_left.label.as_str())
        .x_label_formatter(&fmt)
        .y_label_formatter(&|v| format_number(*v))
        .label_style(font(14.0))
        .axis_desc_style(font(16.0))
        .light_line_style(RGBColor(236, 236, 236))
        .bold_line_style(RGBColor(210, 210, 210))
        .max_light_lines(2)
        .draw()
        .map_err(draw_err)?;
    if let Some(right) = &c.y_right {
        chart
            .configure_secondary_axes()
            .y_desc(right.label.as_str())
            .y_label_formatter(&|v| format_number(*v))
            .label_style(font(14.0))
            .axis_desc_style(font(16.0))
            .draw()
            .map_err(draw_err)?;
    }
    draw_lines(&mut chart, c, map, base)?;
    let (plot_w, plot_h) = chart.plotting_area().dim_in_pixel();
    let corner = legend_corner(
        c,
        map,
        (px0, px1),
        [(yl0, yl1), (yr0, yr1)],
        legend_box_px(c, base),
        (f64::from(plot_w), f64::from(plot_h)),
    );
    chart
        .configure_series_labels()
        .label_font(font(15.0))
        .background_style(WHITE.mix(0.88))
        .border_style(RGBColor(150, 150, 150))
        .position(corner)
        .draw()
        .map_err(draw_err)
}

/// The legend's size in pixels, estimated from its entries: one line of 15-pt text per
/// series and per distinct band label, the widest label (DejaVu Sans averages about
/// 0.55 em a character) beside a 20-pixel sample, with the box's margins.
fn legend_box_px(c: &LineChart, base: f64) -> (f64, f64) {
    let mut labels: Vec<&str> = c.series.iter().map(|s| s.name.as_str()).collect();
    for b in &c.bands {
        if let Some(l) = b.label.as_deref().filter(|l| !labels.contains(l)) {
            labels.push(l);
        }
    }
    let em = 15.0 * base;
    let widest = labels.iter().map(|l| l.chars().count()).max().unwrap_or(0) as f64;
    (
        widest * 0.55 * em + 20.0 + 40.0,
        labels.len() as f64 * (em + 4.0) + 30.0,
    )
}

/// The corner of the plot area where the legend (`size` pixels, in a plot area of
/// `area` pixels) covers the fewest data points, upper right when several tie (then
/// upper left, lower right, lower left).
fn legend_corner(
    c: &LineChart,
    map: XMap,
    (px0, px1): (f64, f64),
    y: [(f64, f64); 2],
    size: (f64, f64),
    area: (f64, f64),
) -> SeriesLabelPosition {
    let fw = ((size.0 + 10.0) / area.0.max(1.0)).min(1.0);
    let fh = ((size.1 + 10.0) / area.1.max(1.0)).min(1.0);
    let mut counts = [0usize; 4];
    for s in &c.series {
        let (y0, y1) = y[usize::from(s.side == Side::Right)];
        for &(x, v) in &s.points {
            let u = (map.to_plot(x) - px0) / (px1 - px0);
            let w = (v - y0) / (y1 - y0);
            if !(u.is_finite() && w.is_finite()) {
                continue;
            }
            let (right, left) = (u >= 1.0 - fw, u <= fw);
            let (top, bottom) = (w >= 1.0 - fh, w <= fh);
            counts[0] += usize::from(top && right);
            counts[1] += usize::from(top && left);
            counts[2] += usize::from(bottom && right);
            counts[3] += usize::from(bottom && left);
        }
    }
    match (0..4).min_by_key(|&i| (counts[i], i)) {
        Some(1) => SeriesLabelPosition::UpperLeft,
        Some(2) => SeriesLabelPosition::LowerRight,
        Some(3) => SeriesLabelPosition::LowerLeft,
        _ => SeriesLabelPosition::UpperRight,
    }
}

fn draw_bands<DB: DrawingBackend>(
    chart: &mut Dual<'_, DB>,
    c: &LineChart,
    map: XMap,
    (y0, y1): (f64, f64),
) -> Result<(), PlotError> {
    let style = rgb(BAND_RGB).mix(0.7).filled();
    let mut labelled: Vec<&str> = Vec::new();
    for b in &c.bands {
        let (a, z) = (map.to_plot(b.x_range.0), map.to_plot(b.x_range.1));
        let rect = Rectangle::new([(a, y0), (z, y1)], style);
        let drawn = chart.draw_series(std::iter::once(rect)).map_err(draw_err)?;
        if let Some(l) = b.label.as_deref().filter(|l| !labelled.contains(l)) {
            labelled.push(l);
            drawn
                .label(l)
                .legend(move |(x, y)| Rectangle::new([(x, y - 6), (x + 20, y + 6)], style));
        }
    }
    Ok(())
}

fn draw_lines<DB: DrawingBackend>(
    chart: &mut Dual<'_, DB>,
    c: &LineChart,
    map: XMap,
    base: f64,
) -> Result<(), PlotError> {
    let width = (2.0 * base).round().max(1.0) as u32;
    let n = c.series.len();
    for (i, s) in c.series.iter().enumerate() {
        let color = rgb(s.color.unwrap_or_else(|| auto_color(i, n)));
        let style = color.stroke_width(width);
        for (k, run) in runs(&s.points, map).into_iter().enumerate() {
            // One element per segment, not one polyline: a wide polyline's mitred
            // joins shoot far past the data where a noisy series turns sharply (spikes
            // above the plot area, dips below zero), and separate segments have no joins.
            let segments: Vec<PathElement<(f64, f64)>> = if run.len() == 1 {
                vec![PathElement::new(vec![run[0], run[0]], style)]
            } else {
                run.windows(2)
                    .map(|w| PathElement::new(vec![w[0], w[1]], style))
                    .collect()
            };
            let line = segments;
            let drawn = match s.side {
                Side::Left => chart.draw_series(line),
                Side::Right => chart.draw_secondary_series(line),
            }
            .map_err(draw_err)?;
            if k == 0 {
                drawn
                    .label(s.name.as_str())
                    .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], style));
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Seconds since the epoch of a UTC date and hour.
    fn utc(date: &str, hour: u32) -> f64 {
        chrono::NaiveDate::parse_from_str(date, "%Y-%m-%d")
            .unwrap()
            .and_hms_opt(hour, 0, 0)
            .unwrap()
            .and_utc()
            .timestamp() as f64
    }

    /// The tick labels of a time axis over `x0..x1` with its first point at `first`.
    fn time_labels(offset_s: i32, x0: f64, x1: f64, first: f64) -> Vec<String> {
        let map = XMap::new(
            XKind::Time {
                utc_offset_s: offset_s,
            },
            x0,
        );
        let (px0, px1) = (map.to_plot(x0), map.to_plot(x1));
        let (ticks, step) = map.ticks(px0, px1, map.to_plot(first));
        ticks
            .iter()
            .map(|v| map.label(*v, step, px1 - px0))
            .collect()
    }

    /// A date sweep two weeks apart gets its ticks on the case dates, labelled by date.
    #[test]
    fn date_sweep_ticks_fall_on_the_case_dates() {
        let (a, b) = (utc("2027-03-01", 0), utc("2027-09-27", 0));
        let got = time_labels(0, a - 7.0 * 86_400.0, b + 7.0 * 86_400.0, a);
        let want: Vec<String> = (0..16)
            .map(|k| {
                (chrono::NaiveDate::from_ymd_opt(2027, 3, 1).unwrap()
                    + chrono::Duration::days(14 * k))
                .format("%m-%d")
                .to_string()
            })
            .collect();
        assert_eq!(got, want);
    }

    /// Five days of a season run: ticks every 12 h on local midnight and noon, in the
    /// chart's offset; one day: every 2 h, clock time alone.
    #[test]
    fn time_ticks_fall_on_local_midnights_and_whole_hours() {
        let start = utc("2027-12-22", 9);
        let got = time_labels(3600, start, start + 5.0 * 86_400.0, start);
        assert_eq!(got.first().map(String::as_str), Some("12-22 12:00"));
        assert_eq!(got.get(1).map(String::as_str), Some("12-23 00:00"));
        assert!(got.len() <= MAX_TIME_TICKS, "{got:?}");
        let got = time_labels(
            0,
            utc("2027-06-21", 0),
            utc("2027-06-22", 0),
            utc("2027-06-21", 0),
        );
        assert_eq!(got.len(), 13);
        assert_eq!(got[1], "02:00");
        assert_eq!(got[12], "00:00");
    }

    fn chart(points: Vec<(f64, f64)>) -> LineChart {
        LineChart {
            title: "t".into(),
            x_label: "x".into(),
            x_kind: XKind::Numeric,
            y_left: YAxis {
                label: "y".into(),
                range: Some((0.0, 10.0)),
            },
            y_right: None,
            series: vec![Series {
                name: "a".into(),
                points,
                side: Side::Left,
                color: None,
            }],
            bands: Vec::new(),
            size_px: (800, 500),
        }
    }

    /// The legend goes to the corner with the fewest points under it: upper right on
    /// empty corners, elsewhere when the data fill the upper right.
    #[test]
    fn the_legend_avoids_the_data() {
        let at = |pts: Vec<(f64, f64)>| {
            let c = chart(pts);
            legend_corner(
                &c,
                XMap::new(XKind::Numeric, 0.0),
                (0.0, 10.0),
                [(0.0, 10.0), (0.0, 1.0)],
                (100.0, 60.0),
                (800.0, 400.0),
            )
        };
        let upper_right: Vec<(f64, f64)> = (0..50).map(|i| (9.0 + 0.02 * i as f64, 9.5)).collect();
        let mut both_upper = upper_right.clone();
        both_upper.extend((0..50).map(|i| (0.02 * i as f64, 9.5)));
        let middle = vec![(5.0, 5.0)];
        assert!(matches!(at(middle), SeriesLabelPosition::UpperRight));
        assert!(matches!(at(upper_right), SeriesLabelPosition::UpperLeft));
        assert!(matches!(at(both_upper), SeriesLabelPosition::LowerRight));
    }
}
