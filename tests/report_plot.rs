//! Chart rendering (src/report/plot.rs): PNG that the `png` crate decodes at the asked
//! size and that is not blank, SVG text holding the title and axis labels, the same
//! bytes for the same chart, and clear errors for charts that cannot be drawn.

use sunward::report::plot::{
    render_png, render_svg, Band, LineChart, PlotError, Series, Side, XKind, YAxis,
};

/// A day of invented rover data at 10-min steps: solar power (W) on the left, state of
/// charge (%) on the right, night shaded, times shown at UTC+02:00.
fn rover_day() -> LineChart {
    let t0 = 1_940_000_400.0; // an instant in 2031, seconds since the epoch
    let power: Vec<(f64, f64)> = (0..=144)
        .map(|i| {
            let h = i as f64 / 6.0;
            let p = (std::f64::consts::PI * (h - 6.0) / 12.0).sin().max(0.0) * 180.0;
            (t0 + i as f64 * 600.0, p)
        })
        .collect();
    let soc: Vec<(f64, f64)> = (0..=144)
        .map(|i| (t0 + i as f64 * 600.0, 40.0 + 0.3 * i as f64))
        .collect();
    LineChart {
        title: "Westfold ridge, 2031-06-21".into(),
        x_label: "time (UTC+02:00)".into(),
        x_kind: XKind::Time { utc_offset_s: 7200 },
        y_left: YAxis {
            label: "solar power (W)".into(),
            range: None,
        },
        y_right: Some(YAxis {
            label: "state of charge (%)".into(),
            range: Some((0.0, 100.0)),
        }),
        series: vec![
            Series {
                name: "solar power".into(),
                points: power,
                side: Side::Left,
                color: None,
            },
            Series {
                name: "state of charge".into(),
                points: soc,
                side: Side::Right,
                color: None,
            },
        ],
        bands: vec![
            Band {
                x_range: (t0, t0 + 6.0 * 3600.0),
                label: Some("night".into()),
            },
            Band {
                x_range: (t0 + 18.0 * 3600.0, t0 + 24.0 * 3600.0),
                label: Some("night".into()),
            },
        ],
        size_px: (900, 540),
    }
}

fn decode(bytes: &[u8]) -> (png::OutputInfo, Vec<u8>) {
    let mut reader = png::Decoder::new(std::io::Cursor::new(bytes))
        .read_info()
        .expect("PNG header");
    let mut buf = vec![0; reader.output_buffer_size().expect("size")];
    let info = reader.next_frame(&mut buf).expect("PNG frame");
    buf.truncate(info.buffer_size());
    (info, buf)
}

#[test]
fn png_decodes_at_the_requested_size_and_is_not_blank() {
    let bytes = render_png(&rover_day()).unwrap();
    let (info, px) = decode(&bytes);
    assert_eq!((info.width, info.height), (900, 540));
    assert_eq!(info.color_type, png::ColorType::Rgb);
    let n = px.len() as f64;
    let mean = px.iter().map(|&v| v as f64).sum::<f64>() / n;
    let var = px.iter().map(|&v| (v as f64 - mean).powi(2)).sum::<f64>() / n;
    assert!(var > 100.0, "pixel variance {var}");
    // Text was rendered: many near-black pixels (labels, title) exist, not only lines.
    let dark = px.chunks(3).filter(|p| p.iter().all(|&v| v < 60)).count();
    assert!(dark > 2_000, "{dark} dark pixels");
    // The night band's fill colour is present.
    let band = px
        .chunks(3)
        .filter(|p| p[2] > p[0] && p[2] - p[0] > 10 && p[0] > 200)
        .count();
    assert!(band > 10_000, "{band} band pixels");
}

#[test]
fn svg_holds_title_axis_labels_and_legend() {
    let svg = render_svg(&rover_day()).unwrap();
    assert!(
        svg.starts_with("<svg") || svg.starts_with("<?xml"),
        "{}",
        &svg[..60]
    );
    assert!(svg.trim_end().ends_with("</svg>"));
    for text in [
        "Westfold ridge, 2031-06-21",
        "time (UTC+02:00)",
        "solar power (W)",
        "state of charge (%)",
        "night",
        "08:00",
    ] {
        assert!(svg.contains(text), "missing {text:?}");
    }
    assert_eq!(svg.matches("<svg").count(), 1);
    // XML-ish: every opened text element is closed, and so is every tag's bracket.
    assert_eq!(svg.matches("<text").count(), svg.matches("</text>").count());
    assert_eq!(svg.matches('<').count(), svg.matches('>').count());
}

#[test]
fn same_chart_same_bytes() {
    let c = rover_day();
    assert_eq!(render_png(&c).unwrap(), render_png(&c).unwrap());
    assert_eq!(render_svg(&c).unwrap(), render_svg(&c).unwrap());
    let mut other = rover_day();
    other.title = "Cairn flats, 2031-12-21".into();
    assert_ne!(render_png(&c).unwrap(), render_png(&other).unwrap());
}

/// The embedded font is registered once for the whole process; charts drawn from
/// several threads at once still come out byte for byte the same.
#[test]
fn charts_from_several_threads_match() {
    let c = rover_day();
    let want = render_png(&c).unwrap();
    let got: Vec<Vec<u8>> = std::thread::scope(|s| {
        let handles: Vec<_> = (0..4)
            .map(|_| s.spawn(|| render_png(&c).unwrap()))
            .collect();
        handles.into_iter().map(|h| h.join().unwrap()).collect()
    });
    assert!(got.iter().all(|g| *g == want));
}

#[test]
fn numeric_axis_and_broken_lines_render() {
    let mut c = rover_day();
    c.x_kind = XKind::Numeric;
    c.x_label = "distance (m)".into();
    c.y_right = None;
    c.series.truncate(1);
    c.series[0].points = vec![(0.0, 1.0), (10.0, f64::NAN), (20.0, 3.0), (30.0, 2.0)];
    c.bands.clear();
    let svg = render_svg(&c).unwrap();
    assert!(svg.contains("distance (m)"));
    // Lines are drawn a segment at a time. The NaN splits the line in two: the lone
    // first point (a dot) and the segment from 20 to 30 m, against the three segments of
    // the same line unbroken.
    let mut whole = c.clone();
    whole.series[0].points[1].1 = 2.0;
    let unbroken = render_svg(&whole).unwrap();
    assert_eq!(
        svg.matches("<polyline").count() + 1,
        unbroken.matches("<polyline").count()
    );
}

#[test]
fn charts_that_cannot_be_drawn_say_why() {
    let mut c = rover_day();
    c.y_right = None;
    assert_eq!(
        render_png(&c).unwrap_err().to_string(),
        "chart: a series is on the right axis but the chart has none. Fix: give the chart a \
         right y axis or put the series on the left"
    );
    let mut c = rover_day();
    c.size_px = (50, 50);
    assert!(matches!(render_svg(&c), Err(PlotError::Chart { .. })));
    let mut c = rover_day();
    c.bands.clear();
    for s in &mut c.series {
        s.points = vec![(1.0, f64::NAN)];
    }
    assert_eq!(
        render_svg(&c).unwrap_err().to_string(),
        "chart: no finite point to draw. Fix: give at least one series with finite points"
    );
}

fn sunward_sun(args: &[&str]) -> std::process::Output {
    assert_cmd::Command::cargo_bin("sunward")
        .unwrap()
        .arg("sun")
        .args(args)
        .output()
        .unwrap()
}

/// `sunward sun --daily --plot` writes a PNG of the asked day (1200 × 700) and an SVG
/// whose text names the site, the date, the units, the clock (UTC or the stated
/// offset), the legend and the night band; the table on stdout is still printed.
#[test]
fn sun_daily_plot_writes_png_and_svg() {
    let dir = tempfile::tempdir().unwrap();
    let png_path = dir.path().join("day.png");
    let base = [
        "--lat",
        "61.2",
        "--lon",
        "-149.9",
        "--date",
        "2031-06-21",
        "--daily",
    ];
    let mut args = base.to_vec();
    args.extend(["--plot", png_path.to_str().unwrap()]);
    let out = sunward_sun(&args);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(String::from_utf8_lossy(&out.stdout).contains("time_utc"));
    let (info, _) = decode(&std::fs::read(&png_path).unwrap());
    assert_eq!((info.width, info.height), (1200, 700));

    let svg_path = dir.path().join("day.SVG");
    let mut args = base.to_vec();
    args.extend(["--plot", svg_path.to_str().unwrap(), "--utc-offset-h", "-8"]);
    args.extend(["--tilt-deg", "40", "--panel-azimuth-deg", "180"]);
    assert!(sunward_sun(&args).status.success());
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    for text in [
        "61.20° N, 149.90° W, 2031-06-21",
        "time (UTC-08:00)",
        "irradiance (W/m²)",
        "sun elevation (deg",
        "GHI",
        "DNI",
        "DHI",
        "POA (tilt 40°",
        "night (sun below horizon)",
    ] {
        assert!(svg.contains(text), "missing {text:?}");
    }
}

#[test]
fn sun_plot_needs_a_known_extension() {
    let out = sunward_sun(&[
        "--lat",
        "10",
        "--lon",
        "10",
        "--date",
        "2031-06-21",
        "--daily",
        "--plot",
        "day.jpg",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr)
        .contains("--plot day.jpg: expected a file ending in .png or .svg"));
}

/// A series that jumps irregularly from point to point stays inside the plot area: no
/// pixel of its colour in the title band above it or in the axis band below it (drawn
/// as one wide polyline, its mitred joins shot spikes out past both).
#[test]
fn a_sharply_swinging_series_stays_inside_the_plot_area() {
    let mut c = rover_day();
    let t0 = 1_940_000_400.0;
    c.series = vec![Series {
        name: "drive power".into(),
        // Irregular jumps between 78 and 135 W every 20 s, as a driving rover's power.
        points: {
            let mut rng = sunward::terrain::synth::SplitMix64::new(5);
            (0..2000)
                .map(|i| (t0 + 20.0 * i as f64, 78.0 + 57.0 * rng.next_f64()))
                .collect()
        },
        side: Side::Left,
        color: Some([255, 0, 255]),
    }];
    c.bands.clear();
    let (info, px) = decode(&render_png(&c).unwrap());
    let w = info.width as usize;
    let magenta = |row: usize| {
        px[row * w * 3..(row + 1) * w * 3]
            .chunks(3)
            .filter(|p| p[0] > 200 && p[1] < 80 && p[2] > 200)
            .count()
    };
    let inside: usize = (0..info.height as usize).map(magenta).sum();
    assert!(inside > 1000, "the series was drawn: {inside} pixels");
    let top: usize = (0..30).map(magenta).sum();
    let bottom: usize = (info.height as usize - 45..info.height as usize)
        .map(magenta)
        .sum();
    assert_eq!(
        (top, bottom),
        (0, 0),
        "pixels above and below the plot area"
    );
}

/// All-zero data (a day of polar night's power) get an axis from 0 to 1 with distinct
/// tick labels, not a sliver whose ticks all read 0.
#[test]
fn flat_data_get_a_readable_axis() {
    let mut c = rover_day();
    c.series[0].points.iter_mut().for_each(|p| p.1 = 0.0);
    let svg = render_svg(&c).unwrap();
    let ticks: Vec<&str> = svg
        .split("</text>")
        .filter_map(|t| t.rsplit('>').next())
        .map(str::trim)
        .collect();
    assert!(ticks.contains(&"0.5") && ticks.contains(&"1"), "{ticks:?}");
}

/// Up to the palette's size the series take its colours; beyond, every series of the
/// chart still gets a colour of its own (twelve months on one chart).
#[test]
fn many_series_get_distinct_colours() {
    use sunward::report::plot::{auto_color, PALETTE};
    assert_eq!(auto_color(2, 5), PALETTE[2]);
    let twelve: Vec<[u8; 3]> = (0..12).map(|i| auto_color(i, 12)).collect();
    for (i, a) in twelve.iter().enumerate() {
        for b in &twelve[i + 1..] {
            let d: i32 = a
                .iter()
                .zip(b)
                .map(|(x, y)| (*x as i32 - *y as i32).abs())
                .sum();
            assert!(d > 40, "{a:?} and {b:?} too close");
        }
    }
}
