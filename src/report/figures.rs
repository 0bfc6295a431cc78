//! Inline SVG figures of the HTML dossier. The T_n trace and the stability bars are drawn with
//! plotters' SVG backend (no font files: its built-in text estimate is enough for SVG, where the
//! viewer lays out the text); labels are added as SVG text of our own, wrapped into lines
//! (`svg_text`). The mutual-membership graph is in `graph.rs`.
//!
//! Colours are from the Okabe–Ito palette, which stays distinguishable under the common forms of
//! colour blindness; every series also differs in shape or position, not colour alone.

use super::svg_text::{text_lines, wrap_label, Place};
use crate::finding::Finding;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Okabe–Ito blue.
const BLUE: RGBColor = RGBColor(0, 114, 178);
/// Okabe–Ito orange.
const ORANGE: RGBColor = RGBColor(230, 159, 0);
/// Okabe–Ito vermillion.
const VERMILLION: RGBColor = RGBColor(213, 94, 0);
/// Neutral grey for axes and the zero line.
const GREY: RGBColor = RGBColor(90, 90, 90);
const FONT: &str = "sans-serif";

/// The figure for `name` (`trace`, `stability`, `graph`), or `None` when there is nothing to draw.
pub fn figure(name: &str, finding: &Finding) -> Option<String> {
    match name {
        "trace" => trace_chart(finding),
        "stability" => stability_chart(finding),
        "graph" => super::graph::membership_graph(finding),
        _ => None,
    }
}

/// T_n of the best candidate at each step, with the zero line; a filled dot where the step admitted
/// its column, an open dot where it stopped, and (calibrated rule) a short bar at the value T_n had
/// to exceed to be significant.
fn trace_chart(finding: &Finding) -> Option<String> {
    let points: Vec<(f64, f64, bool)> = finding
        .trace
        .iter()
        .filter_map(|s| {
            s.candidates
                .first()
                .map(|c| (s.step as f64, c.t_n, s.chosen.is_some()))
        })
        .collect();
    if points.is_empty() {
        return None;
    }
    let critical: Vec<(f64, f64)> = finding
        .trace
        .iter()
        .filter_map(|s| {
            let value = s.test.as_ref()?.critical_t_n?;
            Some((s.step as f64, value))
        })
        .collect();
    let values = points
        .iter()
        .map(|p| p.1)
        .chain(critical.iter().map(|c| c.1));
    let (low, high) = values.fold((0.0f64, 0.0f64), |(lo, hi), v| (lo.min(v), hi.max(v)));
    let pad = ((high - low) * 0.1).max(0.05);
    // Room above the highest point for its label.
    let (y0, y1) = (low - pad, high + 2.5 * pad);
    let last = points.len() as f64;
    let names: Vec<String> = finding
        .trace
        .iter()
        .filter(|s| !s.candidates.is_empty())
        .map(|s| s.chosen.clone().unwrap_or_else(|| "stop".to_string()))
        .collect();
    let anchors: Vec<(i32, i32)>;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (640, 260)).into_drawing_area();
        root.fill(&WHITE).ok()?;
        let mut chart = ChartBuilder::on(&root)
            .margin(12)
            .x_label_area_size(40)
            .y_label_area_size(56)
            .build_cartesian_2d(0.5f64..last + 0.5, y0..y1)
            .ok()?;
        chart
            .configure_mesh()
            .disable_x_mesh()
            .x_labels(points.len())
            .x_label_formatter(&|x| format!("{x:.0}"))
            .y_label_formatter(&|y| {
                let text = format!("{y:.2}");
                if text == "-0.00" {
                    "0.00".to_string()
                } else {
                    text
                }
            })
            .x_desc("selection step")
            .y_desc("T_n of the best column")
            .axis_desc_style((FONT, 14))
            .label_style((FONT, 12))
            .max_light_lines(0)
            .bold_line_style(RGBColor(215, 215, 215))
            .draw()
            .ok()?;
        chart
            .draw_series(DashedLineSeries::new(
                vec![(0.5, 0.0), (last + 0.5, 0.0)],
                6,
                4,
                GREY.stroke_width(1),
            ))
            .ok()?;
        chart
            .draw_series(critical.iter().map(|&(x, y)| {
                PathElement::new(vec![(x - 0.18, y), (x + 0.18, y)], ORANGE.stroke_width(3))
            }))
            .ok()?;
        let line: Vec<(f64, f64)> = points.iter().map(|&(x, y, _)| (x, y)).collect();
        chart
            .draw_series(LineSeries::new(line, BLUE.stroke_width(2)))
            .ok()?;
        chart
            .draw_series(points.iter().map(|&(x, y, admitted)| {
                let style = if admitted {
                    BLUE.filled()
                } else {
                    VERMILLION.stroke_width(3)
                };
                Circle::new((x, y), 5, style)
            }))
            .ok()?;
        if let Some(&(x, y)) = critical.first() {
            // Name the bars once, beside the first.
            let at = chart.backend_coord(&(x + 0.2, y));
            root.draw(&Text::new(
                "needed to be significant",
                (at.0 + 4, at.1),
                (FONT, 12)
                    .into_font()
                    .color(&GREY)
                    .pos(Pos::new(HPos::Left, VPos::Center)),
            ))
            .ok()?;
        }
        anchors = points
            .iter()
            .map(|&(x, y, _)| chart.backend_coord(&(x, y)))
            .collect();
        let zero_label = chart.backend_coord(&(last + 0.5, 0.0));
        let zero_text = match critical.is_empty() {
            true => "0 (stop when not above)",
            false => "0",
        };
        root.draw(&Text::new(
            zero_text,
            (zero_label.0 - 4, zero_label.1 - 4),
            (FONT, 12)
                .into_font()
                .color(&GREY)
                .pos(Pos::new(HPos::Right, VPos::Bottom)),
        ))
        .ok()?;
        root.present().ok()?;
    }
    // Each point named by the column its step chose (SVG text does not wrap: one tspan a line).
    let labels: String = anchors
        .iter()
        .zip(&names)
        .map(|(&(x, y), name)| {
            text_lines(
                &wrap_label(name, TRACE_LABEL_WIDTH),
                (f64::from(x), f64::from(y) - 12.0),
                13.0,
                Place::Above,
                &format!(" font-size=\"11\" text-anchor=\"middle\" font-family=\"{FONT}\"{HALO}"),
            )
        })
        .collect();
    Some(insert_before_end(svg, &labels))
}

/// Characters per line of a trace point's label.
const TRACE_LABEL_WIDTH: usize = 16;

/// Characters per line of a stability row's label.
const STABILITY_LABEL_WIDTH: usize = 26;

/// `svg` with `elements` added last, inside the root element.
fn insert_before_end(svg: String, elements: &str) -> String {
    match svg.rfind("</svg>") {
        Some(at) => format!("{}{elements}{}", &svg[..at], &svg[at..]),
        None => svg,
    }
}

/// How often each column entered the boundary and a parent set, with the threshold.
fn stability_chart(finding: &Finding) -> Option<String> {
    let st = finding.stability.as_ref()?;
    let mut rows: Vec<(&String, f64, f64)> = st
        .markov_boundary
        .iter()
        .map(|(name, &freq)| (name, freq, st.parents.get(name).copied().unwrap_or(0.0)))
        .collect();
    // Highest first; equal frequencies keep name order (the map's order), so the figure is stable.
    rows.sort_by(|a, b| b.1.total_cmp(&a.1).then(b.2.total_cmp(&a.2)));
    if rows.is_empty() {
        return None;
    }
    let n = rows.len();
    let labels: Vec<Vec<String>> = rows
        .iter()
        .map(|(name, _, _)| wrap_label(name, STABILITY_LABEL_WIDTH))
        .collect();
    let most_lines = labels.iter().map(Vec::len).max().unwrap_or(1);
    let row = 26.max(15 * most_lines + 4);
    let height = (70 + row * n) as u32;
    let anchors: Vec<(i32, i32)>;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (640, height)).into_drawing_area();
        root.fill(&WHITE).ok()?;
        let mut chart = ChartBuilder::on(&root)
            .margin(12)
            .margin_top(30)
            .x_label_area_size(36)
            .y_label_area_size(190)
            .build_cartesian_2d(0f64..1f64, 0f64..n as f64)
            .ok()?;
        chart
            .configure_mesh()
            .disable_y_mesh()
            .y_labels(0)
            .x_labels(6)
            .x_label_formatter(&|x| format!("{:.0} %", x * 100.0))
            .x_desc("share of replicates")
            .axis_desc_style((FONT, 14))
            .label_style((FONT, 12))
            .max_light_lines(0)
            .bold_line_style(RGBColor(215, 215, 215))
            .draw()
            .ok()?;
        for (i, (_, boundary, parents)) in rows.iter().enumerate() {
            // Row i from the top.
            let top = (n - i) as f64;
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(0.0, top - 0.12), (*boundary, top - 0.47)],
                    BLUE.filled(),
                )))
                .ok()?;
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(0.0, top - 0.53), (*parents, top - 0.88)],
                    ORANGE.filled(),
                )))
                .ok()?;
        }
        chart
            .draw_series(DashedLineSeries::new(
                vec![(st.threshold, 0.0), (st.threshold, n as f64)],
                6,
                4,
                VERMILLION.stroke_width(2),
            ))
            .ok()?;
        anchors = (0..n)
            .map(|i| chart.backend_coord(&(0.0, (n - i) as f64 - 0.5)))
            .collect();
        let top = chart.backend_coord(&(st.threshold, n as f64));
        root.draw(&Text::new(
            format!("threshold {:.0} %", st.threshold * 100.0),
            (top.0, top.1 - 6),
            (FONT, 12)
                .into_font()
                .color(&VERMILLION)
                .pos(Pos::new(HPos::Center, VPos::Bottom)),
        ))
        .ok()?;
        let legend = chart.backend_coord(&(0.0, n as f64));
        let key = |x: i32, color: RGBColor, text: &str| -> Option<()> {
            root.draw(&Rectangle::new(
                [(x, legend.1 - 22), (x + 12, legend.1 - 12)],
                color.filled(),
            ))
            .ok()?;
            root.draw(&Text::new(
                text.to_string(),
                (x + 16, legend.1 - 17),
                (FONT, 12)
                    .into_font()
                    .color(&BLACK)
                    .pos(Pos::new(HPos::Left, VPos::Center)),
            ))
            .ok()
        };
        key(12, BLUE, "in Markov boundary")?;
        key(150, ORANGE, "in identified parent set")?;
        root.present().ok()?;
    }
    let names: String = anchors
        .iter()
        .zip(&labels)
        .map(|(&(x, y), lines)| {
            text_lines(
                lines,
                (f64::from(x) - 8.0, f64::from(y) + 4.0),
                15.0,
                Place::Centred,
                &format!(" font-size=\"13\" text-anchor=\"end\" font-family=\"{FONT}\""),
            )
        })
        .collect();
    Some(insert_before_end(svg, &names))
}

/// A white outline behind labels keeps them readable where an edge passes underneath.
const HALO: &str = " stroke=\"#ffffff\" stroke-width=\"4\" paint-order=\"stroke\"";

/// Escapes text for XML and HTML content and attribute values.
pub fn xml_escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c if c.is_control() => out.push(' '),
            c => out.push(c),
        }
    }
    out
}
