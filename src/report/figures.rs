//! Inline SVG figures of the HTML dossier. The T_n trace and the stability bars are drawn with
//! plotters' SVG backend (no font files: its built-in text estimate is enough for SVG, where the
//! viewer lays out the text); the mutual-membership graph is written directly as SVG.
//!
//! Colours are from the Okabe–Ito palette, which stays distinguishable under the common forms of
//! colour blindness; every series also differs in shape or position, not colour alone.

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

/// Longest label drawn in a figure; the tables carry the full names.
const LABEL_CHARS: usize = 26;

/// The figure for `name` (`trace`, `stability`, `graph`), or `None` when there is nothing to draw.
pub fn figure(name: &str, finding: &Finding) -> Option<String> {
    match name {
        "trace" => trace_chart(finding),
        "stability" => stability_chart(finding),
        "graph" => membership_graph(finding),
        _ => None,
    }
}

fn short(name: &str) -> String {
    if name.chars().count() <= LABEL_CHARS {
        name.to_string()
    } else {
        let mut s: String = name.chars().take(LABEL_CHARS - 1).collect();
        s.push('…');
        s
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
    let (y0, y1) = (low - pad, high + pad);
    let last = points.len() as f64;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (640, 300)).into_drawing_area();
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
    Some(svg)
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
    let height = (70 + 34 * n) as u32;
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
        let label_style = (FONT, 13)
            .into_font()
            .color(&BLACK)
            .pos(Pos::new(HPos::Right, VPos::Center));
        for (i, (name, _, _)) in rows.iter().enumerate() {
            let at = chart.backend_coord(&(0.0, (n - i) as f64 - 0.5));
            root.draw(&Text::new(
                short(name),
                (at.0 - 8, at.1),
                label_style.clone(),
            ))
            .ok()?;
        }
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
    Some(svg)
}

/// The target in the middle, the boundary members on a circle around it.
fn membership_graph(finding: &Finding) -> Option<String> {
    let members = &finding.markov_boundary;
    if members.is_empty() {
        return None;
    }
    let (width, height) = (640.0, 420.0);
    let (cx, cy, radius) = (width / 2.0, height / 2.0, 150.0);
    let position = |i: usize| -> (f64, f64) {
        let angle = -std::f64::consts::FRAC_PI_2
            + 2.0 * std::f64::consts::PI * i as f64 / members.len() as f64;
        (cx + radius * angle.cos(), cy + radius * angle.sin())
    };
    let index = |name: &str| members.iter().position(|m| m == name);
    let component_of = |name: &str| {
        finding
            .components
            .iter()
            .position(|c| c.members.iter().any(|m| m == name))
    };
    let palette = [
        "#0072B2", "#E69F00", "#009E73", "#CC79A7", "#56B4E9", "#F0E442",
    ];
    let mut svg = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{width}\" height=\"{height}\" \
         viewBox=\"0 0 {width} {height}\" role=\"img\" font-family=\"sans-serif\">\n\
         <rect width=\"{width}\" height=\"{height}\" fill=\"white\"/>\n"
    );
    // Target to member: solid when the member's own boundary holds the target (mutual).
    for (i, m) in members.iter().enumerate() {
        let (x, y) = position(i);
        let mutual = finding
            .boundaries
            .get(m)
            .is_some_and(|b| b.selected.contains(&finding.target));
        let dash = if mutual {
            ""
        } else {
            " stroke-dasharray=\"5 4\""
        };
        svg.push_str(&format!(
            "<line x1=\"{cx:.1}\" y1=\"{cy:.1}\" x2=\"{x:.1}\" y2=\"{y:.1}\" stroke=\"#9a9a9a\" stroke-width=\"1.5\"{dash}/>\n"
        ));
    }
    // Member to member: solid for a mutual membership, dashed where the collider test joined them.
    let mutual = super::mutual_edges(finding);
    let collider = super::collider_edges(finding);
    let edges = mutual
        .iter()
        .map(|e| (e, ""))
        .chain(collider.iter().map(|e| (e, " stroke-dasharray=\"8 5\"")));
    for ([a, b], dash) in edges {
        let (Some(i), Some(j)) = (index(a), index(b)) else {
            continue;
        };
        let ((x1, y1), (x2, y2)) = (position(i), position(j));
        svg.push_str(&format!(
            "<line x1=\"{x1:.1}\" y1=\"{y1:.1}\" x2=\"{x2:.1}\" y2=\"{y2:.1}\" stroke=\"#333333\" stroke-width=\"2.5\"{dash}/>\n"
        ));
    }
    for (i, m) in members.iter().enumerate() {
        let (x, y) = position(i);
        let component = component_of(m);
        let colour = component.map_or("#bbbbbb", |c| palette[c % palette.len()]);
        let passes = component.is_some_and(|c| finding.components[c].passes);
        let stroke = if passes { 4.0 } else { 1.0 };
        let label = xml_escape(&short(m));
        let tag = component.map_or(String::new(), |c| format!("component {}", c + 1));
        // Labels sit on the far side of the node from the target, clear of the edges to it.
        let (label_y, note_y) = if y < cy - 1.0 {
            (y - 36.0, y - 22.0)
        } else {
            (y + 32.0, y + 46.0)
        };
        svg.push_str(&format!(
            "<circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"16\" fill=\"{colour}\" stroke=\"#000000\" stroke-width=\"{stroke}\"/>\n\
             <text x=\"{x:.1}\" y=\"{:.1}\" font-size=\"13\" text-anchor=\"middle\"{HALO}>{label}</text>\n\
             <text x=\"{x:.1}\" y=\"{:.1}\" font-size=\"11\" text-anchor=\"middle\" fill=\"#444444\"{HALO}>{}{}</text>\n",
            label_y,
            note_y,
            tag,
            if passes { ", passes" } else { "" },
        ));
    }
    let target_width = (short(&finding.target).chars().count() as f64 * 8.5 + 24.0).max(110.0);
    svg.push_str(&format!(
        "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"{:.1}\" height=\"34\" rx=\"6\" fill=\"#f2f2f2\" stroke=\"#000000\" stroke-width=\"2\"/>\n\
         <text x=\"{cx:.1}\" y=\"{:.1}\" font-size=\"13\" font-weight=\"bold\" text-anchor=\"middle\">{}</text>\n\
         <text x=\"{cx:.1}\" y=\"{:.1}\" font-size=\"11\" text-anchor=\"middle\" fill=\"#444444\">target</text>\n",
        cx - target_width / 2.0,
        cy - 17.0,
        target_width,
        cy + 1.0,
        xml_escape(&short(&finding.target)),
        cy + 13.0,
    ));
    svg.push_str("</svg>\n");
    Some(svg)
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
