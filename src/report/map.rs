//! The route over shaded relief, as RGB pixels: grey hillshade, the route coloured by
//! step energy (blue = low or regenerating, through yellow, to red = the most costly
//! steps of this route), the start in green, the goal in white and the sites and
//! waypoints in yellow, each on a black outline. Each grid
//! cell is drawn as `scale × scale` pixels so small grids stay readable.
//!
//! [`route_map_svg`] draws the same map as SVG: the shaded relief as an embedded PNG
//! image, the route as vector segments in the same colours, the start, goal and sites as
//! circles, and a title.
//!
//! Other routes of the same run (the sun-aware plans of the seasons) are drawn in the
//! plain colours of [`OTHER_COLOURS`], not by energy: in the pixels under the route and a
//! pixel wider (so that where one follows the route it shows as a coloured edge), in
//! the SVG dashed over it and named in the title line.
//!
//! # Units
//! Pixels; energies in joules only for the colour scale.

use crate::plan::Route;

/// Colour ramp for t ∈ [0, 1]: blue → cyan → yellow → red.
fn ramp(t: f64) -> [u8; 3] {
    let t = t.clamp(0.0, 1.0);
    let stops = [
        [40.0, 70.0, 220.0],
        [40.0, 200.0, 220.0],
        [250.0, 220.0, 40.0],
        [220.0, 30.0, 30.0],
    ];
    let x = t * 3.0;
    let i = (x.floor() as usize).min(2);
    let f = x - i as f64;
    let c = |k: usize| (stops[i][k] + (stops[i + 1][k] - stops[i][k]) * f) as u8;
    [c(0), c(1), c(2)]
}

/// Colours of the other routes, in order, with their names (cycled beyond four).
pub const OTHER_COLOURS: [([u8; 3], &str); 4] = [
    ([200, 0, 200], "magenta"),
    ([20, 20, 20], "black"),
    ([120, 60, 200], "purple"),
    ([255, 140, 210], "pink"),
];

/// The colour of other route `i` and its name.
pub fn other_colour(i: usize) -> ([u8; 3], &'static str) {
    OTHER_COLOURS[i % OTHER_COLOURS.len()]
}

/// The other routes' names with their colours, in drawing order: "spring (magenta),
/// summer (black)".
pub fn others_legend(others: &[(&str, &Route)]) -> String {
    others
        .iter()
        .enumerate()
        .map(|(i, (name, _))| format!("{name} ({})", other_colour(i).1))
        .collect::<Vec<_>>()
        .join(", ")
}

/// RGB pixels of the map: `(width·scale) × (height·scale)`; `others` are drawn under
/// the route, a pixel wider, in [`OTHER_COLOURS`].
pub fn route_map_rgb(
    grey: &[u8],
    width: usize,
    height: usize,
    route: &Route,
    others: &[&Route],
    sites: &[(usize, usize)],
    scale: usize,
) -> Vec<u8> {
    let (pw, ph) = (width * scale, height * scale);
    let mut px = vec![0u8; pw * ph * 3];
    for (i, chunk) in px.chunks_exact_mut(3).enumerate() {
        let (x, y) = (i % pw, i / pw);
        let g = grey[(y / scale) * width + x / scale];
        chunk.copy_from_slice(&[g, g, g]);
    }
    let energies: Vec<f64> = route.profile.iter().map(|p| p.step_energy_j).collect();
    let lo = energies.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = energies.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let mut paint = |col: usize, row: usize, rgb: [u8; 3], grow: usize| {
        let (cx, cy) = (col * scale + scale / 2, row * scale + scale / 2);
        for y in cy.saturating_sub(grow)..(cy + grow + 1).min(ph) {
            for x in cx.saturating_sub(grow)..(cx + grow + 1).min(pw) {
                px[(y * pw + x) * 3..(y * pw + x) * 3 + 3].copy_from_slice(&rgb);
            }
        }
    };
    let line = scale.max(2) / 2;
    // The other routes first, one pixel wider: where one follows the route it shows as
    // a coloured edge around it, elsewhere as its own line.
    for (i, o) in others.iter().enumerate() {
        let (rgb, _) = other_colour(i);
        for p in &o.profile {
            paint(p.col, p.row, rgb, line + 1);
        }
    }
    for p in &route.profile {
        let t = if hi > lo {
            (p.step_energy_j - lo) / (hi - lo)
        } else {
            0.5
        };
        paint(p.col, p.row, ramp(t), line);
    }
    let mark = (scale * 3).max(4);
    for &(c, r) in sites {
        paint(c, r, [0, 0, 0], mark);
        paint(c, r, [250, 215, 40], mark - 1);
    }
    if let (Some(a), Some(b)) = (route.profile.first(), route.profile.last()) {
        paint(a.col, a.row, [0, 0, 0], mark + 1);
        paint(a.col, a.row, [40, 200, 60], mark);
        paint(b.col, b.row, [0, 0, 0], mark + 1);
        paint(b.col, b.row, [255, 255, 255], mark);
    }
    px
}

/// The map of [`route_map_rgb`] (`px`, `pw × ph` pixels) as PNG bytes, framed for a
/// reader: `title` above it and a legend below it — the colour ramp labelled with the
/// route's lowest and highest step energy in Wh, the start, goal and site markers, the
/// other routes' colours with `others`' names, and a scale bar (`cell_m` metres per cell
/// east to west, `scale` pixels per cell). The frame is at least 760 pixels wide (the map centred).
#[allow(clippy::too_many_arguments)]
pub fn route_map_png(
    px: &[u8],
    pw: usize,
    ph: usize,
    route: &Route,
    others: &[&str],
    cell_m: f64,
    scale: usize,
    title: &str,
) -> Result<Vec<u8>, crate::report::plot::PlotError> {
    use crate::report::plot::{draw_err, encode_png, register_fonts, FAMILY};
    use plotters::prelude::*;
    use plotters::style::FontStyle;
    register_fonts()?;
    let (head, foot) = (34usize, if others.is_empty() { 78 } else { 100 });
    let w = pw.max(760);
    let h = ph + head + foot;
    let x0 = (w - pw) / 2;
    let mut rgb = vec![255u8; w * h * 3];
    for y in 0..ph {
        let dst = ((head + y) * w + x0) * 3;
        rgb[dst..dst + pw * 3].copy_from_slice(&px[y * pw * 3..(y + 1) * pw * 3]);
    }
    let wh = |j: f64| j / 3600.0;
    let energies = route.profile.iter().map(|p| p.step_energy_j);
    let lo = energies.clone().fold(f64::INFINITY, f64::min);
    let hi = energies.fold(f64::NEG_INFINITY, f64::max);
    {
        let root = BitMapBackend::with_buffer(&mut rgb, (w as u32, h as u32)).into_drawing_area();
        let text = |t: &str, at: (i32, i32), size: f64| {
            root.draw(&Text::new(
                t.to_string(),
                at,
                (FAMILY, size).into_font().color(&BLACK),
            ))
        };
        root.draw(&Text::new(
            title.to_string(),
            (10, 8),
            (FAMILY, 19.0, FontStyle::Bold).into_font().color(&BLACK),
        ))
        .map_err(draw_err)?;
        let y = (head + ph + 12) as i32;
        // The colour ramp.
        let (bx, bw) = (10i32, 220i32);
        for i in 0..bw {
            let [r, g, b] = ramp(f64::from(i) / f64::from(bw - 1));
            root.draw(&Rectangle::new(
                [(bx + i, y), (bx + i + 1, y + 14)],
                RGBColor(r, g, b).filled(),
            ))
            .map_err(draw_err)?;
        }
        text("route, by the energy of each grid step", (bx, y + 18), 13.0).map_err(draw_err)?;
        if lo.is_finite() && hi.is_finite() {
            text(&format!("{:.2} Wh", wh(lo)), (bx, y + 34), 13.0).map_err(draw_err)?;
            text(&format!("{:.2} Wh", wh(hi)), (bx + bw - 62, y + 34), 13.0).map_err(draw_err)?;
        }
        // Markers.
        let mut mx = bx + bw + 40;
        for (fill, label) in [
            (RGBColor(40, 200, 60), "start"),
            (RGBColor(255, 255, 255), "goal"),
            (RGBColor(250, 215, 40), "site or waypoint"),
        ] {
            // Squares on a black outline, as on the map.
            root.draw(&Rectangle::new(
                [(mx - 7, y), (mx + 7, y + 14)],
                BLACK.filled(),
            ))
            .map_err(draw_err)?;
            root.draw(&Rectangle::new(
                [(mx - 5, y + 2), (mx + 5, y + 12)],
                fill.filled(),
            ))
            .map_err(draw_err)?;
            text(label, (mx + 12, y), 13.0).map_err(draw_err)?;
            mx += 24 + 8 * label.len() as i32;
        }
        // The scale bar: a round length near a fifth of the map's width.
        let cell_px = scale.max(1) as f64;
        let map_m = pw as f64 / cell_px * cell_m;
        if map_m.is_finite() && map_m > 0.0 {
            let target = map_m / 5.0;
            let step = 10f64.powf(target.log10().floor());
            let len_m = [5.0, 2.0, 1.0]
                .iter()
                .map(|k| k * step)
                .find(|&l| l <= target)
                .unwrap_or(step);
            let len_px = (len_m / cell_m * cell_px).round() as i32;
            let sx = bx + bw + 40;
            let sy = y + 32;
            root.draw(&Rectangle::new(
                [(sx, sy), (sx + len_px, sy + 5)],
                BLACK.filled(),
            ))
            .map_err(draw_err)?;
            let label = if len_m >= 1000.0 {
                format!("{} km", len_m / 1000.0)
            } else {
                format!("{len_m} m")
            };
            text(&label, (sx + len_px + 8, sy - 5), 13.0).map_err(draw_err)?;
        }
        // The other routes.
        let mut ox = bx;
        for (i, name) in others.iter().enumerate() {
            let ([r, g, b], _) = other_colour(i);
            let oy = y + 62;
            root.draw(&Rectangle::new(
                [(ox, oy + 4), (ox + 24, oy + 9)],
                RGBColor(r, g, b).filled(),
            ))
            .map_err(draw_err)?;
            text(name, (ox + 30, oy), 13.0).map_err(draw_err)?;
            ox += 50 + 8 * name.len() as i32;
        }
        root.present().map_err(draw_err)?;
    }
    encode_png(&rgb, w as u32, h as u32)
}

/// The map as SVG text (module doc). `relief_png` is the shaded relief, one pixel per
/// cell (`width × height`); `scale` pixels per cell in the drawing; `others` are named
/// routes drawn dashed over the route in [`OTHER_COLOURS`].
#[allow(clippy::too_many_arguments)]
pub fn route_map_svg(
    relief_png: &[u8],
    width: usize,
    height: usize,
    route: &Route,
    others: &[(&str, &Route)],
    sites: &[(usize, usize)],
    scale: usize,
    title: &str,
) -> String {
    use std::fmt::Write;
    let s = scale.max(1) as f64;
    let (pw, ph) = (width as f64 * s, height as f64 * s);
    let head = 28.0;
    let mut out = String::new();
    let mut legend = title.to_string();
    if !others.is_empty() {
        legend.push_str(&format!("; dashed: {}", others_legend(others)));
    }
    let esc = |t: &str| {
        t.replace('&', "&amp;")
            .replace('<', "&lt;")
            .replace('>', "&gt;")
    };
    let _ = write!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{pw}\" height=\"{}\" viewBox=\"0 0 {pw} {}\">\n\
         <rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n\
         <text x=\"8\" y=\"19\" font-family=\"sans-serif\" font-size=\"15\" font-weight=\"bold\">{}</text>\n\
         <image x=\"0\" y=\"{head}\" width=\"{pw}\" height=\"{ph}\" preserveAspectRatio=\"none\" \
         style=\"image-rendering:pixelated\" href=\"data:image/png;base64,{}\"/>\n",
        ph + head,
        ph + head,
        esc(&legend),
        crate::report::html::base64(relief_png)
    );
    let energies: Vec<f64> = route.profile.iter().map(|p| p.step_energy_j).collect();
    let lo = energies.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = energies.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let at = |c: usize, r: usize| ((c as f64 + 0.5) * s, head + (r as f64 + 0.5) * s);
    let stroke = (s * 0.8).max(2.0);
    for w in route.profile.windows(2) {
        let t = if hi > lo {
            (w[1].step_energy_j - lo) / (hi - lo)
        } else {
            0.5
        };
        let [r, g, b] = ramp(t);
        let (a, z) = (at(w[0].col, w[0].row), at(w[1].col, w[1].row));
        let _ = writeln!(
            out,
            "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"rgb({r},{g},{b})\" stroke-width=\"{stroke:.1}\" stroke-linecap=\"round\"/>",
            a.0, a.1, z.0, z.1
        );
    }
    for (i, (_, o)) in others.iter().enumerate() {
        let ([r, g, b], _) = other_colour(i);
        let points: Vec<String> = o
            .profile
            .iter()
            .map(|p| {
                let (x, y) = at(p.col, p.row);
                format!("{x:.1},{y:.1}")
            })
            .collect();
        let _ = writeln!(
            out,
            "<polyline points=\"{}\" fill=\"none\" stroke=\"rgb({r},{g},{b})\" stroke-width=\"{:.1}\" stroke-dasharray=\"{:.1},{:.1}\" stroke-linejoin=\"round\"/>",
            points.join(" "),
            (stroke * 0.6).max(1.5),
            stroke * 2.5,
            stroke * 1.5
        );
    }
    let mark = (s * 3.0).max(4.0);
    let mut dot = |c: usize, r: usize, fill: &str| {
        let (x, y) = at(c, r);
        let _ = writeln!(
            out,
            "<circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"{mark:.1}\" fill=\"{fill}\" stroke=\"black\" stroke-width=\"1.5\"/>"
        );
    };
    for &(c, r) in sites {
        dot(c, r, "rgb(250,215,40)");
    }
    if let (Some(a), Some(b)) = (route.profile.first(), route.profile.last()) {
        dot(a.col, a.row, "rgb(40,200,60)");
        dot(b.col, b.row, "white");
    }
    out.push_str("</svg>\n");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Routes along the runs of cell indices `a..b` given on a flat `w` × `h` grid of
    /// `cell_m` cells, priced for the default rover.
    fn flat_routes<const N: usize>(
        w: usize,
        h: usize,
        cell_m: f64,
        runs: [(usize, usize); N],
    ) -> [Route; N] {
        use crate::plan::route::route_along;
        use crate::plan::{CellFlags, Connectivity, Objective, Planner, TiltLimits};
        use crate::terrain::{GeoRef, Grid};
        use crate::vehicle::{plan_model::RoverStepModel, Rover};
        let dem = Grid::from_vec(w, h, vec![0.0; w * h], GeoRef::local(cell_m));
        let flags = CellFlags::from_dem(&dem);
        let rover = Rover::default();
        let model = RoverStepModel::new(&rover);
        let p = Planner {
            dem: &dem,
            flags: &flags,
            model: &model,
            limits: TiltLimits::default(),
            connectivity: Connectivity::Eight,
            objective: Objective::ENERGY,
        };
        runs.map(|(a, b)| route_along(&p, &(a..b).collect::<Vec<_>>(), 0))
    }

    /// A straight route across a flat 20 x 9 grid and another along the bottom row:
    /// the other is drawn in the first colour in both maps and named in the SVG title.
    #[test]
    fn other_routes_are_drawn_and_named() {
        let [main, other] = flat_routes(20, 9, 1.0, [(20, 40), (140, 160)]);
        let px = route_map_rgb(&[128; 180], 20, 9, &main, &[&other], &[], 2);
        // Cell (10, 7) of the other route, at pixel (21, 15) with 2 pixels per cell, away
        // from the start and goal marks; a cell of neither route stays grey.
        let pixel = |x: usize, y: usize| px[(y * 40 + x) * 3..(y * 40 + x) * 3 + 3].to_vec();
        assert_eq!(pixel(21, 15), OTHER_COLOURS[0].0);
        assert_eq!(pixel(21, 10), [128; 3]);
        let svg = route_map_svg(&[], 20, 9, &main, &[("winter", &other)], &[], 2, "map");
        assert!(svg.contains("map; dashed: winter (magenta)"), "{svg}");
        assert!(svg.contains("stroke=\"rgb(200,0,200)\""), "{svg}");
        assert!(svg.contains("stroke-dasharray"), "{svg}");
    }

    /// The framed PNG decodes at the frame's size, holds the map's pixels unchanged
    /// below the title band, and has text (dark pixels) in the title band and legend.
    #[test]
    fn framed_map_png_has_title_map_and_legend() {
        let (pw, ph) = (40usize, 30usize);
        let px: Vec<u8> = (0..pw * ph * 3).map(|i| (i % 200) as u8 + 30).collect();
        let [route] = flat_routes(pw, ph, 2.0, [(45, 60)]);
        let png = route_map_png(&px, pw, ph, &route, &["spring"], 2.0, 1, "Test ridge").unwrap();
        let mut reader = ::png::Decoder::new(std::io::Cursor::new(png))
            .read_info()
            .unwrap();
        let mut buf = vec![0; reader.output_buffer_size().unwrap()];
        let info = reader.next_frame(&mut buf).unwrap();
        let (w, h) = (info.width as usize, info.height as usize);
        assert_eq!((w, h), (760, ph + 34 + 100));
        let x0 = (w - pw) / 2;
        for y in 0..ph {
            let at = ((34 + y) * w + x0) * 3;
            assert_eq!(&buf[at..at + pw * 3], &px[y * pw * 3..(y + 1) * pw * 3]);
        }
        let dark = |rows: std::ops::Range<usize>| {
            buf[rows.start * w * 3..rows.end * w * 3]
                .chunks(3)
                .filter(|p| p.iter().all(|&v| v < 80))
                .count()
        };
        assert!(dark(0..34) > 50, "title text");
        assert!(dark(34 + ph..h) > 200, "legend text and scale bar");
    }

    #[test]
    fn ramp_ends_are_blue_and_red() {
        assert_eq!(ramp(0.0), [40, 70, 220]);
        assert_eq!(ramp(1.0), [220, 30, 30]);
    }
}
