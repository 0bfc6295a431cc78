//! Text in SVG figures. SVG text does not wrap, so a long column name is split into lines
//! (`<tspan>`s) at the places a name breaks naturally (after `_`, `-`, `.`, `/` or a space), and
//! only where a part is itself too long, inside it: every character is kept, none is cut.

use super::figures::xml_escape;

/// `name` in lines of at most `width` characters (at least one line; the lines joined give
/// `name` back).
pub fn wrap_label(name: &str, width: usize) -> Vec<String> {
    let width = width.max(1);
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for part in parts(name) {
        let fits = line.chars().count() + part.chars().count() <= width;
        if !fits && !line.is_empty() {
            lines.push(std::mem::take(&mut line));
        }
        if part.chars().count() <= width {
            line.push_str(&part);
            continue;
        }
        // A part longer than a line: split it, keeping its last piece open for what follows.
        let chars: Vec<char> = part.chars().collect();
        let mut pieces = chars.chunks(width).peekable();
        while let Some(piece) = pieces.next() {
            let piece: String = piece.iter().collect();
            if pieces.peek().is_some() {
                lines.push(piece);
            } else {
                line = piece;
            }
        }
    }
    if !line.is_empty() || lines.is_empty() {
        lines.push(line);
    }
    lines
}

/// `name` cut after each natural break character.
fn parts(name: &str) -> Vec<String> {
    let mut parts = Vec::new();
    let mut part = String::new();
    for c in name.chars() {
        part.push(c);
        if matches!(c, '_' | '-' | '.' | '/' | ' ') {
            parts.push(std::mem::take(&mut part));
        }
    }
    if !part.is_empty() {
        parts.push(part);
    }
    parts
}

/// Where the lines of a label go relative to its anchor point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Place {
    /// The first line's baseline at the anchor, the rest below.
    Below,
    /// The last line's baseline at the anchor, the rest above.
    Above,
    /// The lines centred on the anchor.
    Centred,
}

/// One `<text>` element of `lines` (escaped) at `(x, y)`, one `<tspan>` per line, `line_height`
/// pixels apart; `attributes` are added to the element as they are (size, anchor, colour).
pub fn text_lines(
    lines: &[String],
    (x, y): (f64, f64),
    line_height: f64,
    place: Place,
    attributes: &str,
) -> String {
    let extra = (lines.len().saturating_sub(1)) as f64 * line_height;
    let first = match place {
        Place::Below => y,
        Place::Above => y - extra,
        Place::Centred => y - extra / 2.0,
    };
    let mut svg = format!("<text x=\"{x:.1}\" y=\"{first:.1}\"{attributes}>");
    for (i, line) in lines.iter().enumerate() {
        let dy = if i == 0 { 0.0 } else { line_height };
        svg.push_str(&format!(
            "<tspan x=\"{x:.1}\" dy=\"{dy:.1}\">{}</tspan>",
            xml_escape(line)
        ));
    }
    svg.push_str("</text>\n");
    svg
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn short_names_stay_on_one_line() {
        assert_eq!(wrap_label("kiln_peak_temp", 18), ["kiln_peak_temp"]);
        assert_eq!(wrap_label("", 18), [""]);
    }

    #[test]
    fn long_names_break_after_natural_separators_and_lose_nothing() {
        let name = "slurry_moisture_at_the_second_mixing_station";
        let lines = wrap_label(name, 18);
        assert_eq!(
            lines,
            ["slurry_moisture_", "at_the_second_", "mixing_station"]
        );
        assert!(lines.iter().all(|l| l.chars().count() <= 18), "{lines:?}");
        assert_eq!(lines.concat(), name);
    }

    #[test]
    fn a_part_longer_than_a_line_is_split_inside_and_kept_whole() {
        let name = "abcdefghijklmnopqrstuvwxyz_end";
        let lines = wrap_label(name, 10);
        assert_eq!(lines, ["abcdefghij", "klmnopqrst", "uvwxyz_end"]);
        assert_eq!(wrap_label("ééééé", 2), ["éé", "éé", "é"]);
    }

    #[test]
    fn every_line_is_a_tspan_and_text_is_escaped() {
        let svg = text_lines(
            &["a<b".to_string(), "c&d".to_string()],
            (10.0, 50.0),
            14.0,
            Place::Above,
            " font-size=\"11\"",
        );
        assert_eq!(
            svg,
            "<text x=\"10.0\" y=\"36.0\" font-size=\"11\"><tspan x=\"10.0\" dy=\"0.0\">a&lt;b</tspan>\
             <tspan x=\"10.0\" dy=\"14.0\">c&amp;d</tspan></text>\n"
        );
    }
}
