//! The mutual-membership graph of the HTML dossier, written directly as SVG: the target in the
//! middle, the members of its Markov boundary around it, coloured and shaped by their role
//! (identified parent, candidate, other member), arrows where a direction is known (identified
//! parents into the target; directions read with the stated knowledge or through the neighbours'
//! searches), and a legend of what is drawn. Shapes and line styles carry every distinction, so
//! the figure reads in greyscale too; colours are the Okabe–Ito palette of `templates/palette.css`.

use super::svg_text::{text_lines, wrap_label, Place};
use crate::finding::Finding;
use crate::search::knowledge::{Direction, TargetEdge};
use crate::search::Outcome;

/// Okabe–Ito blue (`--accent`): identified parents.
const PARENT_FILL: &str = "#0072B2";
/// Okabe–Ito orange (`--amber`): candidates whose direction is undecided.
const CANDIDATE_FILL: &str = "#E69F00";
/// Light grey: other members of the Markov boundary.
const OTHER_FILL: &str = "#d9d9d9";
/// Characters per line of a node's label.
const LABEL_WIDTH: usize = 18;
const LINE_HEIGHT: f64 = 13.0;
const NODE_RADIUS: f64 = 15.0;
const WIDTH: f64 = 640.0;

/// What a member is in the finding, which sets its colour and shape.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Role {
    /// In the identified parent set.
    Parent,
    /// In a candidate set (not identifiable, or one of conflicting groups).
    Candidate,
    /// In the Markov boundary only.
    Other,
}

impl Role {
    fn of(finding: &Finding, member: &str) -> Role {
        let in_a_set = finding.parent_sets.iter().flatten().any(|m| m == member);
        match (finding.outcome, in_a_set) {
            (Outcome::Identified, true) => Role::Parent,
            (_, true) => Role::Candidate,
            _ => Role::Other,
        }
    }

    fn legend(self) -> &'static str {
        match self {
            Role::Parent => "identified parent (direct cause)",
            Role::Candidate => "candidate: cause or effect, undecided",
            Role::Other => "other member of the Markov boundary",
        }
    }

    /// The node's shape at `(x, y)`: a circle, a diamond or a square.
    fn shape(self, (x, y): (f64, f64), r: f64, stroke: f64) -> String {
        match self {
            Role::Parent => format!(
                "<circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"{r:.1}\" fill=\"{PARENT_FILL}\" stroke=\"#000000\" stroke-width=\"{stroke}\"/>\n"
            ),
            Role::Candidate => {
                let d = r * 1.25;
                format!(
                    "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"{CANDIDATE_FILL}\" stroke=\"#000000\" stroke-width=\"{stroke}\"/>\n",
                    x, y - d, x + d, y, x, y + d, x - d, y
                )
            }
            Role::Other => {
                let s = r * 0.9;
                format!(
                    "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"{:.1}\" height=\"{:.1}\" fill=\"{OTHER_FILL}\" stroke=\"#000000\" stroke-width=\"{stroke}\"/>\n",
                    x - s, y - s, 2.0 * s, 2.0 * s
                )
            }
        }
    }
}

/// Where the direction of an edge at the target comes from, which sets its line style.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Basis {
    /// The search for the target alone (a v-structure at it).
    Data,
    /// The data together with the stated knowledge.
    Knowledge,
    /// The data, through a neighbour's own search.
    Neighbourhood,
}

impl Basis {
    fn dash(self) -> &'static str {
        match self {
            Basis::Data => "",
            Basis::Knowledge => " stroke-dasharray=\"2 3\"",
            Basis::Neighbourhood => " stroke-dasharray=\"9 3 2 3\"",
        }
    }

    fn legend(self) -> &'static str {
        match self {
            Basis::Data => "direction found by the data",
            Basis::Knowledge => "direction with the stated knowledge",
            Basis::Neighbourhood => "direction through a neighbour's search",
        }
    }
}

/// The line between the target and a member.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum TargetLink {
    /// An arrow: into the target when `into`, else out of it.
    Arrow { into: bool, basis: Basis },
    /// No direction; `mutual` when the member's own boundary holds the target.
    Undirected { mutual: bool },
}

impl TargetLink {
    /// The link of `member`: the identified parents point into the target; else the direction
    /// the knowledge's reading gives, else the neighbourhood's (a reading in conflict gives none).
    pub fn of(finding: &Finding, member: &str, role: Role) -> TargetLink {
        if role == Role::Parent {
            return TargetLink::Arrow {
                into: true,
                basis: Basis::Data,
            };
        }
        let reading = |edges: &[TargetEdge], outcome: Outcome, basis: Basis| {
            if outcome == Outcome::Conflict {
                return None;
            }
            edges
                .iter()
                .find(|e| e.member == member)
                .and_then(|e| match e.direction {
                    Direction::IntoTarget => Some(true),
                    Direction::OutOfTarget => Some(false),
                    Direction::Undecided => None,
                })
                .map(|into| TargetLink::Arrow { into, basis })
        };
        let knowledge = finding
            .with_knowledge
            .as_ref()
            .and_then(|k| reading(&k.edges, k.outcome, Basis::Knowledge));
        let neighbourhood = finding
            .with_neighbourhood
            .as_ref()
            .and_then(|n| reading(&n.edges, n.outcome, Basis::Neighbourhood));
        knowledge
            .or(neighbourhood)
            .unwrap_or(TargetLink::Undirected {
                mutual: finding
                    .boundaries
                    .get(member)
                    .is_some_and(|b| b.selected.iter().any(|m| m == &finding.target)),
            })
    }
}

/// One member placed.
struct Node {
    name: String,
    role: Role,
    link: TargetLink,
    at: (f64, f64),
    label: Vec<String>,
    note: String,
    passes: bool,
    /// Above the target (its label goes above it).
    upper: bool,
}

/// The graph, or `None` when the Markov boundary is empty.
pub fn membership_graph(finding: &Finding) -> Option<String> {
    let members = &finding.markov_boundary;
    if members.is_empty() {
        return None;
    }
    let (rx, ry) = (225.0, 95.0);
    let centre = (WIDTH / 2.0, 0.0);
    let mut nodes: Vec<Node> = members
        .iter()
        .enumerate()
        .map(|(i, m)| {
            // From the left, clockwise: two members sit left and right of the target.
            let angle = std::f64::consts::PI * (1.0 + 2.0 * i as f64 / members.len() as f64);
            let role = Role::of(finding, m);
            let component = finding
                .components
                .iter()
                .position(|c| c.members.iter().any(|x| x == m));
            let passes = component.is_some_and(|c| finding.components[c].passes);
            let mut at = (centre.0 + rx * angle.cos(), centre.1 + ry * angle.sin());
            if at.1.abs() < 1e-6 {
                at.1 = 0.0;
            }
            Node {
                name: m.clone(),
                role,
                link: TargetLink::of(finding, m, role),
                at,
                label: wrap_label(m, LABEL_WIDTH),
                note: component.map_or(String::new(), |c| {
                    format!(
                        "component {}{}",
                        c + 1,
                        if passes { ", passes" } else { "" }
                    )
                }),
                passes,
                upper: at.1 < 0.0,
            }
        })
        .collect();
    let target_label = wrap_label(&finding.target, 22);
    let target_half = (
        (target_label
            .iter()
            .map(|l| l.chars().count())
            .max()
            .unwrap_or(0) as f64
            * 4.3
            + 12.0)
            .max(55.0),
        (target_label.len() as f64 * LINE_HEIGHT + 16.0) / 2.0,
    );
    // Labels go below a node, or above it for a node in the upper half.
    let label_extent = |n: &Node| (n.label.len() as f64 + 1.0) * LINE_HEIGHT + 8.0;
    let top = nodes
        .iter()
        .map(|n| match n.upper {
            true => n.at.1 - NODE_RADIUS - label_extent(n),
            false => n.at.1 - NODE_RADIUS * 1.3,
        })
        .fold(-target_half.1, f64::min)
        .min(
            member_pairs(finding, &nodes)
                .iter()
                .map(|((a, b), _)| curve_top(*a, *b, bow(centre, *a, *b)) - 6.0)
                .fold(f64::INFINITY, f64::min),
        );
    let bottom = nodes
        .iter()
        .map(|n| match n.upper {
            true => n.at.1 + NODE_RADIUS * 1.3,
            false => n.at.1 + NODE_RADIUS + label_extent(n),
        })
        .fold(target_half.1, f64::max);
    let shift = 12.0 - top;
    for n in &mut nodes {
        n.at.1 += shift;
    }
    let centre = (centre.0, centre.1 + shift);
    let legend = Legend::of(finding, &nodes);
    let legend_top = bottom + shift + 18.0;
    let height = legend_top + legend.height() + 8.0;
    let mut svg = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{WIDTH}\" height=\"{height:.0}\" \
         viewBox=\"0 0 {WIDTH} {height:.0}\" role=\"img\" font-family=\"sans-serif\">\n\
         <rect width=\"{WIDTH}\" height=\"{height:.0}\" fill=\"white\"/>\n"
    );
    for n in &nodes {
        svg.push_str(&target_line(centre, target_half, n));
    }
    svg.push_str(&member_edges(finding, centre, &nodes));
    for n in &nodes {
        svg.push_str(&node(n));
    }
    svg.push_str(&format!(
        "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"{:.1}\" height=\"{:.1}\" rx=\"6\" fill=\"#f2f2f2\" stroke=\"#000000\" stroke-width=\"2\"/>\n",
        centre.0 - target_half.0,
        centre.1 - target_half.1,
        2.0 * target_half.0,
        2.0 * target_half.1
    ));
    svg.push_str(&text_lines(
        &target_label,
        (centre.0, centre.1 - 2.0),
        LINE_HEIGHT,
        Place::Centred,
        " font-size=\"12\" font-weight=\"bold\" text-anchor=\"middle\"",
    ));
    svg.push_str(&format!(
        "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"10\" text-anchor=\"middle\" fill=\"#444444\">target</text>\n",
        centre.0,
        centre.1 + target_half.1 - 4.0
    ));
    svg.push_str(&legend.draw(legend_top));
    svg.push_str("</svg>\n");
    Some(svg)
}

/// The line from the target's box to a member, shortened to both outlines so that an arrowhead
/// touches the node it points at.
fn target_line(centre: (f64, f64), half: (f64, f64), n: &Node) -> String {
    let (dx, dy) = (n.at.0 - centre.0, n.at.1 - centre.1);
    let length = (dx * dx + dy * dy).sqrt().max(1.0);
    let (ux, uy) = (dx / length, dy / length);
    // Leave the box where the ray from its centre crosses its outline.
    let t = (half.0 / ux.abs().max(1e-9)).min(half.1 / uy.abs().max(1e-9)) + 2.0;
    let from = (centre.0 + ux * t, centre.1 + uy * t);
    let to = (
        n.at.0 - ux * (NODE_RADIUS + 4.0),
        n.at.1 - uy * (NODE_RADIUS + 4.0),
    );
    match n.link {
        TargetLink::Arrow { into, basis } => {
            // The head at the end it points to; the line stops at the head's base.
            let (tip, tail) = if into { (from, to) } else { (to, from) };
            let (hx, hy) = unit(tip, tail);
            let base = (tip.0 + hx * ARROW_LENGTH, tip.1 + hy * ARROW_LENGTH);
            format!(
                "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#1a1a1a\" stroke-width=\"2\"{}/>\n{}",
                tail.0,
                tail.1,
                base.0,
                base.1,
                basis.dash(),
                arrow_head(tip, (-hx, -hy))
            )
        }
        TargetLink::Undirected { mutual } => format!(
            "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#8a8a8a\" stroke-width=\"1.5\"{}/>\n",
            from.0,
            from.1,
            to.0,
            to.1,
            if mutual { "" } else { " stroke-dasharray=\"5 4\"" }
        ),
    }
}

/// Length of an arrowhead, in pixels.
const ARROW_LENGTH: f64 = 11.0;

/// The unit vector from `a` towards `b`.
fn unit(a: (f64, f64), b: (f64, f64)) -> (f64, f64) {
    let (dx, dy) = (b.0 - a.0, b.1 - a.1);
    let length = (dx * dx + dy * dy).sqrt().max(1e-9);
    (dx / length, dy / length)
}

/// A filled arrowhead with its point at `tip`, pointing along the unit vector `direction`.
pub fn arrow_head(tip: (f64, f64), direction: (f64, f64)) -> String {
    let (ux, uy) = direction;
    let base = (tip.0 - ux * ARROW_LENGTH, tip.1 - uy * ARROW_LENGTH);
    let half = ARROW_LENGTH * 0.45;
    format!(
        "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"#1a1a1a\"/>\n",
        tip.0,
        tip.1,
        base.0 - uy * half,
        base.1 + ux * half,
        base.0 + uy * half,
        base.1 - ux * half
    )
}

/// Edges between members: solid for a mutual membership, dashed where the collider test joined.
/// Each is drawn as a curve bowed away from the target, so that it never runs through the target
/// or along a line to it.
fn member_edges(finding: &Finding, centre: (f64, f64), nodes: &[Node]) -> String {
    let mut svg = String::new();
    for ((a, b), dash) in member_pairs(finding, nodes) {
        let control = bow(centre, a, b);
        svg.push_str(&format!(
            "<path d=\"M{:.1},{:.1} Q{:.1},{:.1} {:.1},{:.1}\" fill=\"none\" stroke=\"#333333\" stroke-width=\"2.5\"{dash}/>\n",
            a.0, a.1, control.0, control.1, b.0, b.1
        ));
    }
    svg
}

/// Two placed ends of a line.
type Ends = ((f64, f64), (f64, f64));

/// The placed ends of every member-to-member edge, with its dash.
fn member_pairs(finding: &Finding, nodes: &[Node]) -> Vec<(Ends, &'static str)> {
    let at = |name: &str| nodes.iter().find(|n| n.name == name).map(|n| n.at);
    let mutual = super::mutual_edges(finding).iter().map(|e| (e, ""));
    let collider = super::collider_edges(finding)
        .iter()
        .map(|e| (e, " stroke-dasharray=\"8 5\""));
    mutual
        .chain(collider)
        .filter_map(|([a, b], dash)| Some(((at(a)?, at(b)?), dash)))
        .collect()
}

/// The control point of the curve from `a` to `b`: pushed away from `centre`, upwards when the
/// straight line would pass through it.
fn bow(centre: (f64, f64), a: (f64, f64), b: (f64, f64)) -> (f64, f64) {
    let mid = ((a.0 + b.0) / 2.0, (a.1 + b.1) / 2.0);
    let (mut vx, mut vy) = (mid.0 - centre.0, mid.1 - centre.1);
    let mut push = 30.0;
    if (vx * vx + vy * vy).sqrt() < 40.0 {
        // Through the target: bow over it, perpendicular to the edge.
        let (dx, dy) = (b.0 - a.0, b.1 - a.1);
        (vx, vy) = if dx.abs() > 1e-9 {
            (dy, -dx)
        } else {
            (-1.0, 0.0)
        };
        if vy > 0.0 {
            (vx, vy) = (-vx, -vy);
        }
        push = 150.0;
    }
    let length = (vx * vx + vy * vy).sqrt().max(1e-9);
    (mid.0 + vx / length * push, mid.1 + vy / length * push)
}

/// The highest point of a quadratic curve from `a` to `b` through `control` (approximately: the
/// curve's midpoint, its extreme for a symmetric bow).
fn curve_top(a: (f64, f64), b: (f64, f64), control: (f64, f64)) -> f64 {
    (a.1 + b.1) / 4.0 + control.1 / 2.0
}

/// A member's shape, label (wrapped) and component note: below the node, or above it for a node
/// in the upper half, clear of the lines to the target.
fn node(n: &Node) -> String {
    let (x, y) = n.at;
    let mut svg = n
        .role
        .shape(n.at, NODE_RADIUS, if n.passes { 3.0 } else { 1.0 });
    let label = |anchor: (f64, f64), place| {
        text_lines(
            &n.label,
            anchor,
            LINE_HEIGHT,
            place,
            &format!(" font-size=\"12\" text-anchor=\"middle\"{HALO}"),
        )
    };
    if n.upper {
        let note_y = y - NODE_RADIUS - 8.0;
        svg.push_str(&note(&n.note, (x, note_y)));
        svg.push_str(&label((x, note_y - LINE_HEIGHT), Place::Above));
    } else {
        let label_y = y + NODE_RADIUS + 14.0;
        svg.push_str(&label((x, label_y), Place::Below));
        let note_y = label_y + n.label.len() as f64 * LINE_HEIGHT;
        svg.push_str(&note(&n.note, (x, note_y)));
    }
    svg
}

fn note(text: &str, (x, y): (f64, f64)) -> String {
    if text.is_empty() {
        return String::new();
    }
    format!(
        "<text x=\"{x:.1}\" y=\"{y:.1}\" font-size=\"10\" text-anchor=\"middle\" fill=\"#444444\"{HALO}>{text}</text>\n"
    )
}

/// A white outline behind labels keeps them readable where an edge passes underneath.
const HALO: &str = " stroke=\"#ffffff\" stroke-width=\"4\" paint-order=\"stroke\"";

/// The legend: one entry per kind of node and line that the graph draws.
#[derive(Debug, PartialEq)]
pub struct Legend {
    /// Node roles drawn.
    pub roles: Vec<Role>,
    /// Kinds of line from the target drawn.
    pub links: Vec<LinkKind>,
    /// Member-to-member edges drawn: mutual, collider.
    pub member_edges: (bool, bool),
}

/// A kind of line from the target, as the legend names it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum LinkKind {
    /// An arrow of this basis.
    Arrow(Basis),
    /// No direction; mutual or not.
    Undirected(bool),
}

const LEGEND_ROW: f64 = 18.0;

impl Legend {
    fn of(finding: &Finding, nodes: &[Node]) -> Legend {
        let mut roles: Vec<Role> = nodes.iter().map(|n| n.role).collect();
        roles.sort();
        roles.dedup();
        let mut links: Vec<LinkKind> = nodes
            .iter()
            .map(|n| match n.link {
                TargetLink::Arrow { basis, .. } => LinkKind::Arrow(basis),
                TargetLink::Undirected { mutual } => LinkKind::Undirected(mutual),
            })
            .collect();
        links.sort();
        links.dedup();
        Legend {
            roles,
            links,
            member_edges: (
                !super::mutual_edges(finding).is_empty(),
                !super::collider_edges(finding).is_empty(),
            ),
        }
    }

    fn entries(&self) -> Vec<(String, String)> {
        let mut entries: Vec<(String, String)> = self
            .roles
            .iter()
            .map(|r| (r.shape((8.0, 0.0), 7.0, 1.0), r.legend().to_string()))
            .collect();
        let line = |stroke: &str, width: f64, dash: &str, marker: &str| {
            format!(
                "<line x1=\"0\" y1=\"0\" x2=\"26\" y2=\"0\" stroke=\"{stroke}\" stroke-width=\"{width}\"{dash}{marker}/>\n"
            )
        };
        for kind in &self.links {
            entries.push(match kind {
                LinkKind::Arrow(basis) => (
                    format!(
                        "{}{}",
                        line("#1a1a1a", 2.0, basis.dash(), ""),
                        arrow_head((30.0, 0.0), (1.0, 0.0))
                    ),
                    basis.legend().to_string(),
                ),
                LinkKind::Undirected(true) => (
                    line("#8a8a8a", 1.5, "", ""),
                    "linked with the target, direction undecided".to_string(),
                ),
                LinkKind::Undirected(false) => (
                    line("#8a8a8a", 1.5, " stroke-dasharray=\"5 4\"", ""),
                    "linked; the member's own boundary lacks the target".to_string(),
                ),
            });
        }
        if self.member_edges.0 {
            entries.push((
                line("#333333", 2.5, "", ""),
                "members in each other's boundary".to_string(),
            ));
        }
        if self.member_edges.1 {
            entries.push((
                line("#333333", 2.5, " stroke-dasharray=\"8 5\"", ""),
                "members joined by the collider test".to_string(),
            ));
        }
        entries
    }

    fn height(&self) -> f64 {
        (self.entries().len().div_ceil(2)) as f64 * LEGEND_ROW + 6.0
    }

    /// The legend in two columns, under a rule, from `top`.
    fn draw(&self, top: f64) -> String {
        let mut svg = format!(
            "<line x1=\"12\" y1=\"{top:.1}\" x2=\"{:.1}\" y2=\"{top:.1}\" stroke=\"#c8c8c8\" stroke-width=\"1\"/>\n",
            WIDTH - 12.0
        );
        for (i, (symbol, text)) in self.entries().iter().enumerate() {
            let x = 16.0 + (i % 2) as f64 * (WIDTH / 2.0);
            let y = top + 14.0 + (i / 2) as f64 * LEGEND_ROW;
            svg.push_str(&format!(
                "<g transform=\"translate({x:.1},{y:.1})\">{symbol}</g>\n\
                 <text x=\"{:.1}\" y=\"{:.1}\" font-size=\"11\" fill=\"#1a1a1a\">{}</text>\n",
                x + 36.0,
                y + 4.0,
                super::figures::xml_escape(text)
            ));
        }
        svg
    }
}
