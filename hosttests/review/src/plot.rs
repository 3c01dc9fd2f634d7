//! The SVG plot of a replay: irradiance (top) and cumulative dose (bottom) against time, with
//! the target and the overexposure level (target + tolerance) as lines and the events as
//! markers. Drawn with `plotters` (SVG backend only).
//!
//! The irradiance panel shows the lowest and highest irradiance of each plotted bucket (the
//! series is decimated to at most [`super::replay::MAX_PLOT_BINS`] buckets, so a long run
//! keeps its peaks and dips); the dose is shown in the unit of the configured target.

use plotters::prelude::*;

use super::config::ReviewConfig;
use super::error::ReviewError;
use super::replay::Series;
use super::report::Report;

const IRRADIANCE: RGBColor = RGBColor(0x0b, 0x6e, 0x8a);
const IRRADIANCE_LOW: RGBColor = RGBColor(0x7f, 0xbf, 0xd1);
const DOSE: RGBColor = RGBColor(0x8a, 0x3b, 0x12);
const TARGET: RGBColor = RGBColor(0x2e, 0x7d, 0x32);
const OVER: RGBColor = RGBColor(0xc6, 0x28, 0x28);
const GRID: RGBColor = RGBColor(0xe4, 0xe4, 0xe4);

/// The unit the dose is plotted in: label and factor from J/m².
fn dose_unit(config: &ReviewConfig) -> (&'static str, f64) {
    let mol_per_j = config.meter.band().mol_per_j();
    match config.target.key {
        "photons_mol" | "photons_umol" => {
            let area = config.meter.sample_area().map_or(0.0, |a| a.m2());
            ("photons to the area (µmol)", mol_per_j * area * 1e6)
        }
        "photon_exposure_mol_per_m2" | "photon_exposure_umol_per_m2" => {
            ("photon exposure (µmol/m²)", mol_per_j * 1e6)
        }
        "radiant_exposure_mj_per_cm2" => ("radiant exposure (mJ/cm²)", 0.1),
        _ => ("radiant exposure (J/m²)", 1.0),
    }
}

fn irradiance_unit(config: &ReviewConfig) -> (&'static str, f64) {
    if config.target.key == "radiant_exposure_mj_per_cm2" {
        ("irradiance (mW/cm²)", 0.1)
    } else {
        ("irradiance (W/m²)", 1.0)
    }
}

fn time_unit(duration_s: f64) -> (&'static str, f64) {
    if duration_s > 3.0 * 3600.0 {
        ("time (h)", 1.0 / 3600.0)
    } else if duration_s > 600.0 {
        ("time (min)", 1.0 / 60.0)
    } else {
        ("time (s)", 1.0)
    }
}

fn marker_colour(kind: &str) -> Option<(RGBColor, &'static str)> {
    Some(match kind {
        "target_met" => (TARGET, "target met"),
        "overexposed" => (OVER, "overexposed"),
        "fault" => (RGBColor(0x6a, 0x1b, 0x9a), "fault"),
        "gap" => (RGBColor(0x55, 0x55, 0x55), "gap"),
        "saturated_run" => (RGBColor(0xef, 0x6c, 0x00), "saturated"),
        "exposure_level_raised" | "exposure_alarm_latched" => {
            (RGBColor(0xad, 0x14, 0x57), "exposure warning")
        }
        _ => return None,
    })
}

fn marker_colour_by_name(name: &str) -> Option<RGBColor> {
    [
        "target_met",
        "overexposed",
        "fault",
        "gap",
        "saturated_run",
        "exposure_level_raised",
    ]
    .iter()
    .filter_map(|k| marker_colour(k))
    .find(|(_, n)| *n == name)
    .map(|(c, _)| c)
}

/// A number with at most 4 significant digits, trailing zeros removed.
fn short(v: f64) -> String {
    let a = v.abs();
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    if !(1e-3..1e5).contains(&a) {
        return format!("{v:.2e}");
    }
    let decimals = (3 - a.log10().floor() as i32).max(0) as usize;
    let s = format!("{v:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

fn draw_err<E: std::error::Error>(e: E) -> ReviewError {
    ReviewError::Other(format!("plot: {e}"))
}

/// Draw the plot as an SVG document.
///
/// # Errors
/// [`ReviewError::Other`] if drawing fails or there is nothing to draw.
pub fn render_svg(
    report: &Report,
    series: &Series,
    config: &ReviewConfig,
) -> Result<String, ReviewError> {
    if series.bins.is_empty() {
        return Err(ReviewError::Other("plot: no samples to draw".into()));
    }
    let hz = f64::from(config.meter.tick_rate().hz());
    let origin = report.timing.start_time_s;
    let (t_label, t_k) = time_unit(report.timing.duration_s);
    let (e_label, e_k) = irradiance_unit(config);
    let (d_label, d_k) = dose_unit(config);
    let t_of = |ticks: u64| (origin + ticks as f64 / hz) * t_k;
    let x0 = t_of(0);
    let x1 = t_of(series.bins.last().map_or(1, |b| b.t_last)).max(x0 + 1e-9);
    let e_max = series
        .bins
        .iter()
        .filter(|b| !b.e_max.is_nan())
        .map(|b| b.e_max * e_k)
        .fold(0.0f64, f64::max);
    let e_min = series
        .bins
        .iter()
        .filter(|b| !b.e_min.is_nan())
        .map(|b| b.e_min * e_k)
        .fold(0.0f64, f64::min);
    let target = report.configuration.target_j_per_m2 * d_k;
    let over =
        (report.configuration.target_j_per_m2 + report.configuration.tolerance_j_per_m2) * d_k;
    let d_max = series
        .bins
        .iter()
        .map(|b| b.dose_last * d_k)
        .fold(target, f64::max);
    // An overexposure level far above everything else would squash the curve: leave it off
    // the scale and say so in the legend.
    let over_on_scale = over <= d_max * 1.5;
    let d_top = if over_on_scale {
        d_max.max(over)
    } else {
        d_max
    } * 1.08;

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (1100, 760)).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        let title = format!(
            "{} — {}",
            report.input.samples_file,
            match report.outcome.fault.as_deref() {
                Some(f) => format!("{} ({f})", report.outcome.stop_reason),
                None => report.outcome.stop_reason.clone(),
            }
        );
        let root = root
            .titled(&title, ("sans-serif", 22).into_font().color(&BLACK))
            .map_err(draw_err)?;
        let (top, bottom) = root.split_vertically(330);

        let mut top_chart = ChartBuilder::on(&top)
            .margin(14)
            .margin_left(20)
            .x_label_area_size(42)
            .y_label_area_size(78)
            .build_cartesian_2d(x0..x1, e_min..(e_max * 1.08).max(1e-12))
            .map_err(draw_err)?;
        top_chart
            .configure_mesh()
            .light_line_style(TRANSPARENT)
            .bold_line_style(GRID)
            .x_label_formatter(&|v| short(*v))
            .y_label_formatter(&|v| short(*v))
            .x_desc(t_label)
            .y_desc(e_label)
            .axis_desc_style(("sans-serif", 16))
            .label_style(("sans-serif", 13))
            .draw()
            .map_err(draw_err)?;
        // Gaps (longer than the allowed interval) are shaded and break the lines.
        for g in &report.timing.gaps {
            top_chart
                .draw_series(std::iter::once(Rectangle::new(
                    [
                        (g.start_time_s * t_k, e_min),
                        (g.end_time_s * t_k, e_max * 1.08),
                    ],
                    RGBColor(0x90, 0x90, 0x90).mix(0.25).filled(),
                )))
                .map_err(draw_err)?;
        }
        let max_gap_ticks = (report.configuration.max_gap_s * hz).round() as u64;
        let mut runs: Vec<Vec<&super::replay::Bin>> = Vec::new();
        let mut last_t: Option<u64> = None;
        for b in series.bins.iter().filter(|b| !b.e_max.is_nan()) {
            if last_t.is_none_or(|t| b.t_first.saturating_sub(t) > max_gap_ticks) {
                runs.push(Vec::new());
            }
            if let Some(r) = runs.last_mut() {
                r.push(b);
            }
            last_t = Some(b.t_last);
        }
        let merged = series.shift > 0;
        for (i, run) in runs.iter().enumerate() {
            if merged {
                let drawn = top_chart
                    .draw_series(LineSeries::new(
                        run.iter().map(|b| (t_of(b.t_first), b.e_min * e_k)),
                        IRRADIANCE_LOW.stroke_width(1),
                    ))
                    .map_err(draw_err)?;
                if i == 0 {
                    drawn.label("bucket minimum").legend(|(x, y)| {
                        PathElement::new(vec![(x, y), (x + 18, y)], IRRADIANCE_LOW)
                    });
                }
            }
            let drawn = top_chart
                .draw_series(LineSeries::new(
                    run.iter().map(|b| (t_of(b.t_first), b.e_max * e_k)),
                    IRRADIANCE.stroke_width(2),
                ))
                .map_err(draw_err)?;
            if i == 0 {
                drawn
                    .label(if merged {
                        "bucket maximum"
                    } else {
                        "irradiance"
                    })
                    .legend(|(x, y)| {
                        PathElement::new(vec![(x, y), (x + 18, y)], IRRADIANCE.stroke_width(2))
                    });
            }
        }
        top_chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.85))
            .border_style(GRID)
            .label_font(("sans-serif", 13))
            .draw()
            .map_err(draw_err)?;

        let mut chart = ChartBuilder::on(&bottom)
            .margin(14)
            .margin_left(20)
            .x_label_area_size(42)
            .y_label_area_size(78)
            .build_cartesian_2d(x0..x1, 0.0..d_top.max(1e-12))
            .map_err(draw_err)?;
        chart
            .configure_mesh()
            .light_line_style(TRANSPARENT)
            .bold_line_style(GRID)
            .x_label_formatter(&|v| short(*v))
            .y_label_formatter(&|v| short(*v))
            .x_desc(t_label)
            .y_desc(d_label)
            .axis_desc_style(("sans-serif", 16))
            .label_style(("sans-serif", 13))
            .draw()
            .map_err(draw_err)?;
        chart
            .draw_series(LineSeries::new(
                series
                    .bins
                    .iter()
                    .map(|b| (t_of(b.t_last), b.dose_last * d_k)),
                DOSE.stroke_width(2),
            ))
            .map_err(draw_err)?
            .label("cumulative dose")
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], DOSE.stroke_width(2)));
        chart
            .draw_series(DashedLineSeries::new(
                vec![(x0, target), (x1, target)],
                8,
                5,
                TARGET.stroke_width(2),
            ))
            .map_err(draw_err)?
            .label(format!("target {}", short(target)))
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], TARGET.stroke_width(2)));
        let over_points = if over_on_scale {
            vec![(x0, over), (x1, over)]
        } else {
            Vec::new()
        };
        chart
            .draw_series(DashedLineSeries::new(
                over_points,
                3,
                4,
                OVER.stroke_width(2),
            ))
            .map_err(draw_err)?
            .label(if over_on_scale {
                format!("target + tolerance {}", short(over))
            } else {
                format!("target + tolerance {} (off scale)", short(over))
            })
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], OVER.stroke_width(2)));

        // Events: a marker on the dose curve, one legend entry per kind.
        let mut seen: Vec<&'static str> = Vec::new();
        let dose_at = |t_s: f64| {
            let ticks = ((t_s - origin) * hz).max(0.0) as u64;
            let i = series.bins.partition_point(|b| b.t_last < ticks);
            series
                .bins
                .get(i)
                .or(series.bins.last())
                .map_or(0.0, |b| b.dose_last * d_k)
        };
        // Events close together (within 1.5 % of the time axis) share one label.
        let mut marks: Vec<(f64, f64, RGBColor, Vec<&'static str>)> = Vec::new();
        for e in report.events.iter().take(200) {
            let Some((colour, name)) = marker_colour(&e.kind) else {
                continue;
            };
            let x = e.time_s * t_k;
            let y = match (
                e.kind.as_str(),
                report.dose.at_target_radiant_exposure_j_per_m2,
            ) {
                ("target_met", Some(h)) => h * d_k,
                _ => dose_at(e.time_s),
            };
            let near = marks
                .last_mut()
                .filter(|m| (x - m.0).abs() < 0.015 * (x1 - x0));
            match near {
                Some(m) if !m.3.contains(&name) => m.3.push(name),
                Some(_) => {}
                None => marks.push((x, y, colour, vec![name])),
            }
            // A thin vertical line in the irradiance panel.
            top_chart
                .draw_series(DashedLineSeries::new(
                    vec![(x, e_min), (x, e_max * 1.08)],
                    4,
                    4,
                    colour.mix(0.7).stroke_width(1),
                ))
                .map_err(draw_err)?;
        }
        for (n, (x, y, colour, names)) in marks.iter().enumerate() {
            let label = names.join(", ");
            // Labels near the right edge go to the left of the marker; alternate heights.
            let width = 7 * label.chars().count() as i32;
            let dx = if *x > x0 + 0.75 * (x1 - x0) {
                -width - 8
            } else {
                8
            };
            let dy = if n % 2 == 0 { -20 } else { -36 };
            chart
                .draw_series(std::iter::once(
                    EmptyElement::at((*x, *y))
                        + TriangleMarker::new((0, 0), 9, colour.filled())
                        + Text::new(
                            label.clone(),
                            (dx, dy),
                            ("sans-serif", 13).into_font().color(colour),
                        ),
                ))
                .map_err(draw_err)?;
            for name in names {
                if !seen.contains(name) {
                    seen.push(name);
                }
            }
        }
        // One legend entry per kind of event.
        for name in seen {
            let c = marker_colour_by_name(name).unwrap_or(BLACK);
            chart
                .draw_series(std::iter::empty::<Circle<(f64, f64), i32>>())
                .map_err(draw_err)?
                .label(name)
                .legend(move |(x, y)| TriangleMarker::new((x + 9, y), 6, c.filled()));
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::LowerRight)
            .background_style(WHITE.mix(0.85))
            .border_style(GRID)
            .label_font(("sans-serif", 13))
            .draw()
            .map_err(draw_err)?;
        root.present().map_err(draw_err)?;
    }
    Ok(svg)
}
