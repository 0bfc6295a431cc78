//! How well does the local parent search recover known structures?
//!
//! For each data set (a CSV beside its truth: `X.truth.json` with parents and the tree flag, or
//! `X.graph.json` with parent lists only), runs `forebear::search::local_parents` for every column
//! as target, over all other columns, with the defaults of `forebear analyze` (rank scaling, seed 1,
//! α = 0.05), and compares the outcome with the published structure. Results: docs/recovery.md.
//!
//! ```text
//! cargo run --release --example recovery -- [--seed N] [--alpha A] [--nodes] [FILE.csv ...]
//! ```
//! Without files, every data set of `../shared/reference-data/sem/` is used. `--nodes` prints one
//! line per target. `--orient` adds, per data set, the outcome with orientation through the
//! neighbourhood (`forebear::search::orient`, reading the searches of the other columns, which this
//! run makes anyway); `--tiers` the outcome with tiers taken from the published structure's
//! topological order (`forebear::search::knowledge`, tier of a node = length of the longest
//! directed path from a root to it). Either adds a table of the variants after the usual output.
//!
//! "Tree-shaped neighbourhood" is the condition of Azadkia, Taeb and Bühlmann (arXiv:2111.14969):
//! no undirected cycle of the true graph's skeleton passes through the target. It is computed here
//! from the parent lists for every data set (v lies on a cycle iff two of its neighbours are still
//! connected once v is removed) and checked against the stored flag where a truth file has one.
//! For comparison the run also lists the nodes whose flag would change under a purely local
//! reading (cycles through v using only v's own neighbours, i.e. triangles).

use forebear::data::{read_data, LoadOptions, Table};
use forebear::measure::Scaling;
use forebear::search::knowledge::{self, Direction, Knowledge};
use forebear::search::orient;
use forebear::search::{local_parents, Outcome, ParentSearch, SearchData, SelectionRule};
use rayon::prelude::*;
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};
use std::time::Instant;

type Graph = BTreeMap<String, BTreeSet<String>>;

struct Settings {
    seed: u64,
    alpha: f64,
    rule: SelectionRule,
    per_node: bool,
    orient: bool,
    tiers: bool,
    files: Vec<PathBuf>,
}

fn main() {
    let settings = parse_arguments();
    println!(
        "local parent search, every column as target; scaling rank, seed {}, alpha {}, {} stopping \
         rule, {} threads",
        settings.seed,
        settings.alpha,
        settings.rule.stopping_rule.name(),
        rayon::current_num_threads()
    );
    let started = Instant::now();
    for file in &settings.files {
        if let Err(message) = run_data_set(file, &settings) {
            eprintln!("{}: {message}", file.display());
            std::process::exit(2);
        }
    }
    println!("\ntotal time {:.1} s", started.elapsed().as_secs_f64());
}

fn parse_arguments() -> Settings {
    let mut settings = Settings {
        seed: 1,
        alpha: 0.05,
        rule: SelectionRule::calibrated(),
        per_node: false,
        orient: false,
        tiers: false,
        files: Vec::new(),
    };
    let mut args = std::env::args().skip(1);
    while let Some(arg) = args.next() {
        let mut value = |flag: &str| {
            args.next()
                .unwrap_or_else(|| usage(&format!("{flag} needs a value")))
        };
        match arg.as_str() {
            "--seed" => {
                settings.seed = value("--seed")
                    .parse()
                    .unwrap_or_else(|_| usage("bad --seed"))
            }
            "--alpha" => {
                settings.alpha = value("--alpha")
                    .parse()
                    .unwrap_or_else(|_| usage("bad --alpha"))
            }
            "--rule" => {
                settings.rule = match value("--rule").as_str() {
                    "calibrated" => SelectionRule::calibrated(),
                    "natural" => SelectionRule::natural(),
                    _ => usage("--rule is calibrated or natural"),
                }
            }
            "--nodes" => settings.per_node = true,
            "--orient" => settings.orient = true,
            "--tiers" => settings.tiers = true,
            "--help" | "-h" => usage(""),
            _ if arg.starts_with("--") => usage(&format!("unknown flag {arg}")),
            _ => settings.files.push(PathBuf::from(arg)),
        }
    }
    if settings.files.is_empty() {
        let folder = Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/reference-data/sem");
        let mut files: Vec<PathBuf> = std::fs::read_dir(&folder)
            .unwrap_or_else(|e| usage(&format!("cannot list {}: {e}", folder.display())))
            .filter_map(|entry| entry.ok().map(|e| e.path()))
            .filter(|p| p.extension().is_some_and(|x| x == "csv"))
            .collect();
        files.sort();
        settings.files = files;
    }
    settings
}

fn usage(problem: &str) -> ! {
    if !problem.is_empty() {
        eprintln!("{problem}");
    }
    eprintln!("usage: cargo run --release --example recovery -- [--seed N] [--alpha A] [--rule calibrated|natural] [--nodes] [--orient] [--tiers] [FILE.csv ...]");
    std::process::exit(2);
}

/// The true structure beside a data file.
struct Truth {
    parents: Graph,
    /// The tree flag as stored in a `.truth.json` (absent for `.graph.json`).
    stored_tree: Option<BTreeMap<String, bool>>,
    source: PathBuf,
}

fn read_truth(csv: &Path) -> Result<Truth, String> {
    let stem = csv.with_extension("");
    for (suffix, stored) in [("truth.json", true), ("graph.json", false)] {
        let source = PathBuf::from(format!("{}.{suffix}", stem.display()));
        let Ok(text) = std::fs::read_to_string(&source) else {
            continue;
        };
        let json: serde_json::Value =
            serde_json::from_str(&text).map_err(|e| format!("{}: {e}", source.display()))?;
        let bad = || format!("{}: unexpected layout", source.display());
        let names = |v: &serde_json::Value| -> Option<BTreeSet<String>> {
            v.as_array()?
                .iter()
                .map(|p| p.as_str().map(str::to_string))
                .collect()
        };
        let mut parents = Graph::new();
        let mut flags = BTreeMap::new();
        if stored {
            for (node, entry) in json["nodes"].as_object().ok_or_else(bad)? {
                parents.insert(node.clone(), names(&entry["parents"]).ok_or_else(bad)?);
                flags.insert(
                    node.clone(),
                    entry["tree_neighbourhood"].as_bool().ok_or_else(bad)?,
                );
            }
        } else {
            for (node, list) in json["parents"].as_object().ok_or_else(bad)? {
                parents.insert(node.clone(), names(list).ok_or_else(bad)?);
            }
        }
        return Ok(Truth {
            parents,
            stored_tree: stored.then_some(flags),
            source,
        });
    }
    Err("no .truth.json or .graph.json beside the data file".into())
}

/// Neighbours in the skeleton (parents and children).
fn skeleton(parents: &Graph) -> Graph {
    let mut adjacent: Graph = parents
        .keys()
        .map(|v| (v.clone(), BTreeSet::new()))
        .collect();
    for (child, ps) in parents {
        for p in ps {
            adjacent.entry(child.clone()).or_default().insert(p.clone());
            adjacent.entry(p.clone()).or_default().insert(child.clone());
        }
    }
    adjacent
}

/// No undirected cycle of the skeleton passes through `v`: the neighbours of `v` lie in distinct
/// connected components once `v` is removed. `within` limits the paths to a vertex set (the whole
/// graph for the paper's condition; the neighbours of `v` for the local variant).
fn no_cycle_through(adjacent: &Graph, v: &str, within: Option<&BTreeSet<String>>) -> bool {
    // Search from each neighbour in turn; meeting a neighbour already reached from an earlier one
    // closes a cycle through v.
    let mut reached: BTreeSet<&str> = BTreeSet::new();
    for start in &adjacent[v] {
        if !reached.insert(start.as_str()) {
            return false;
        }
        let mut stack = vec![start.as_str()];
        while let Some(a) = stack.pop() {
            for b in &adjacent[a] {
                let allowed = b != v && within.is_none_or(|w| w.contains(b));
                if allowed && reached.insert(b.as_str()) {
                    stack.push(b);
                }
            }
        }
    }
    true
}

/// Parents, children and the children's other parents.
fn markov_blanket(parents: &Graph, v: &str) -> BTreeSet<String> {
    let mut blanket = parents[v].clone();
    for (child, ps) in parents {
        if ps.contains(v) {
            blanket.insert(child.clone());
            blanket.extend(ps.iter().filter(|p| *p != v).cloned());
        }
    }
    blanket
}

/// `v` and every node with a directed path into it.
fn ancestors(parents: &Graph, v: &str) -> BTreeSet<String> {
    let mut found = BTreeSet::from([v.to_string()]);
    let mut stack = vec![v.to_string()];
    while let Some(a) = stack.pop() {
        for p in &parents[&a] {
            if found.insert(p.clone()) {
                stack.push(p.clone());
            }
        }
    }
    found
}

/// Two or more parents, no two of which share an ancestor (themselves included): then the parents
/// are pairwise marginally independent (d-separated by the empty set), the only parent sets the
/// search can pass as a component.
fn independent_parents(parents: &Graph, v: &str) -> bool {
    let sets: Vec<BTreeSet<String>> = parents[v].iter().map(|p| ancestors(parents, p)).collect();
    sets.len() >= 2
        && sets
            .iter()
            .enumerate()
            .all(|(i, a)| sets[i + 1..].iter().all(|b| a.is_disjoint(b)))
}

/// What one target's search gave, beside its truth.
struct NodeResult {
    name: String,
    parents: BTreeSet<String>,
    tree: bool,
    /// Two or more pairwise marginally independent parents in the true graph.
    independent_parents: bool,
    outcome: Outcome,
    /// Identified: the set; not identifiable: the singleton candidates.
    claimed: BTreeSet<String>,
    /// Components that passed (several for a conflict).
    passing: Vec<BTreeSet<String>>,
    boundary: BTreeSet<String>,
    blanket: BTreeSet<String>,
    /// Parents and children in the true graph.
    adjacent: BTreeSet<String>,
    /// Members that took part in the parent step (the natural rule leaves out members whose own
    /// boundary lacks the target).
    confirmed: BTreeSet<String>,
    /// The components of the members' graph.
    components: Vec<BTreeSet<String>>,
}

impl NodeResult {
    fn wrong_claims(&self) -> usize {
        match self.outcome {
            Outcome::Identified => self.claimed.difference(&self.parents).count(),
            _ => 0,
        }
    }

    /// For a findable target (two or more pairwise independent parents) that was not identified
    /// exactly, the first step of the search that went wrong:
    /// (A) the target's boundary misses a true parent; (B) a true parent is in the boundary but
    /// takes no part in the parent step (natural rule: its own boundary lacks the target);
    /// (C) two true parents take part but lie in different components (no edge joins them);
    /// (D) a non-parent lies in the parents' component; (E) the component is exactly the parents
    /// but the pairwise independence tests rejected; (F) anything else (e.g. a conflict).
    fn first_failing_step(&self) -> Option<&'static str> {
        let exact = self.outcome == Outcome::Identified && self.claimed == self.parents;
        if !self.independent_parents || exact {
            return None;
        }
        if !self.parents.is_subset(&self.boundary) {
            return Some("A");
        }
        if !self.parents.is_subset(&self.confirmed) {
            return Some("B");
        }
        let holding = self
            .components
            .iter()
            .find(|c| c.contains(self.parents.iter().next().expect("two or more parents")));
        match holding {
            Some(c) if !self.parents.is_subset(c) => Some("C"),
            Some(c) if c != &self.parents => Some("D"),
            Some(_) if !self.passing.contains(&self.parents) => Some("E"),
            _ => Some("F"),
        }
    }

    fn jaccard(&self) -> f64 {
        let union = self.claimed.union(&self.parents).count();
        if union == 0 {
            return 1.0;
        }
        self.claimed.intersection(&self.parents).count() as f64 / union as f64
    }
}

/// Reads the CSV with the crate's reader; these files have no missing cells and no constant column.
fn load_table(path: &Path) -> Result<Table, String> {
    let (raw, facts) = read_data(path, &LoadOptions::default()).map_err(|e| e.to_string())?;
    let mut columns = Vec::new();
    for (j, name) in raw.names.iter().enumerate() {
        let values: Option<Vec<f64>> = raw.column_cells(j).collect();
        let values = values.ok_or_else(|| format!("column '{name}' has missing cells"))?;
        if values.iter().all(|&v| v == values[0]) {
            return Err(format!("column '{name}' is constant"));
        }
        columns.push(values);
    }
    let table = Table::from_columns(raw.names.clone(), columns);
    let sha256 = facts.sha256;
    println!(
        "  {} rows, {} columns, sha256 {}",
        table.n_rows(),
        table.n_cols(),
        &sha256[..16]
    );
    Ok(table)
}

fn run_data_set(path: &Path, settings: &Settings) -> Result<(), String> {
    let name = path
        .file_stem()
        .map_or_else(String::new, |s| s.to_string_lossy().into_owned());
    println!("\n## {name}");
    let truth = read_truth(path)?;
    println!("  truth: {}", truth.source.display());
    let table = load_table(path)?;
    let adjacent = skeleton(&truth.parents);
    let mut disagreements = Vec::new();
    let mut local_differs = Vec::new();
    for node in table.names() {
        if !truth.parents.contains_key(node) {
            return Err(format!("column '{node}' is not in the truth file"));
        }
        let tree = no_cycle_through(&adjacent, node, None);
        if let Some(stored) = truth.stored_tree.as_ref().and_then(|s| s.get(node)) {
            if *stored != tree {
                disagreements.push(node.clone());
            }
        }
        if no_cycle_through(&adjacent, node, Some(&adjacent[node])) != tree {
            local_differs.push(node.clone());
        }
    }
    if !disagreements.is_empty() {
        return Err(format!(
            "computed tree flag differs from the stored one for {disagreements:?}"
        ));
    }
    if truth.stored_tree.is_some() {
        println!(
            "  computed tree flags agree with the stored ones for all {} nodes",
            table.n_cols()
        );
    }
    println!(
        "  nodes whose flag differs under the local variant (cycles within the neighbourhood only): {}",
        if local_differs.is_empty() { "none".to_string() } else { local_differs.join(", ") }
    );

    let started = Instant::now();
    let data = SearchData::new(&table, Scaling::Rank, settings.seed, 0);
    let all: Vec<usize> = (0..table.n_cols()).collect();
    let searches: Vec<ParentSearch> = all
        .par_iter()
        .map(|&target| {
            let candidates: Vec<usize> = all.iter().copied().filter(|&j| j != target).collect();
            local_parents(&data, target, &candidates, settings.alpha, &settings.rule)
        })
        .collect();
    let seconds = started.elapsed().as_secs_f64();
    let variants = (settings.orient || settings.tiers)
        .then(|| variant_results(&data, &searches, &truth.parents, settings));
    let results: Vec<NodeResult> = searches
        .into_iter()
        .map(|search| {
            let node = search.target.clone();
            NodeResult {
                parents: truth.parents[&node].clone(),
                tree: no_cycle_through(&adjacent, &node, None),
                independent_parents: independent_parents(&truth.parents, &node),
                outcome: search.outcome,
                claimed: search.parent_sets.iter().flatten().cloned().collect(),
                passing: search
                    .components
                    .iter()
                    .filter(|c| c.passes)
                    .map(|c| c.members.iter().cloned().collect())
                    .collect(),
                boundary: search.markov_boundary.selected.iter().cloned().collect(),
                blanket: markov_blanket(&truth.parents, &node),
                adjacent: adjacent[&node].clone(),
                confirmed: search
                    .components
                    .iter()
                    .flat_map(|c| c.members.iter().cloned())
                    .collect(),
                components: search
                    .components
                    .iter()
                    .map(|c| c.members.iter().cloned().collect())
                    .collect(),
                name: node,
            }
        })
        .collect();
    if settings.per_node {
        print_nodes(&results);
    }
    print_summary(&results);
    print_notable(&results);
    println!("  time: {seconds:.1} s for {} targets", results.len());
    if let Some(variants) = variants {
        print_variants(&results, &variants);
    }
    Ok(())
}

/// One target's conclusion under a variant: outcome, claimed parents (identified only), and the
/// directions it gave to members whose edge the data alone left open: (member, into target).
struct VariantResult {
    outcome: Outcome,
    claimed: BTreeSet<String>,
    oriented: Vec<(String, bool)>,
}

/// Tiers from the published structure: a node's tier is the length of the longest directed path
/// from a root to it.
fn topological_tiers(parents: &Graph) -> Knowledge {
    fn depth(v: &str, parents: &Graph, memo: &mut BTreeMap<String, usize>) -> usize {
        if let Some(&d) = memo.get(v) {
            return d;
        }
        let d = parents[v]
            .iter()
            .map(|p| depth(p, parents, memo) + 1)
            .max()
            .unwrap_or(0);
        memo.insert(v.to_string(), d);
        d
    }
    let mut memo = BTreeMap::new();
    let mut tiers: Vec<Vec<String>> = Vec::new();
    for v in parents.keys() {
        let d = depth(v, parents, &mut memo);
        if tiers.len() <= d {
            tiers.resize(d + 1, Vec::new());
        }
        tiers[d].push(v.clone());
    }
    Knowledge {
        tiers,
        ..Knowledge::default()
    }
}

/// Per variant label, per target (column order): the conclusion with neighbourhood orientation
/// and/or with tiers.
fn variant_results(
    data: &SearchData,
    searches: &[ParentSearch],
    parents: &Graph,
    settings: &Settings,
) -> Vec<(&'static str, Vec<VariantResult>)> {
    let undecided_singletons = |s: &ParentSearch| -> BTreeSet<String> {
        match s.outcome {
            Outcome::NotIdentifiable => orient::open_members(s).into_iter().collect(),
            _ => BTreeSet::new(),
        }
    };
    let read = |outcome: Outcome,
                parent_sets: &[Vec<String>],
                edges: &[knowledge::TargetEdge],
                open: &BTreeSet<String>| VariantResult {
        outcome,
        claimed: match outcome {
            Outcome::Identified => parent_sets.iter().flatten().cloned().collect(),
            _ => BTreeSet::new(),
        },
        oriented: edges
            .iter()
            .filter(|e| open.contains(&e.member) && e.direction != Direction::Undecided)
            .map(|e| (e.member.clone(), e.direction == Direction::IntoTarget))
            .collect(),
    };
    let mut out = Vec::new();
    if settings.orient {
        let by_name: BTreeMap<String, ParentSearch> = searches
            .iter()
            .map(|s| (s.target.clone(), s.clone()))
            .collect();
        let first: Vec<orient::NeighbourhoodOrientation> = searches
            .par_iter()
            .map(|s| orient::orient(s, &by_name))
            .collect();
        let results = searches
            .iter()
            .zip(&first)
            .map(|(s, o)| {
                read(
                    o.outcome,
                    &o.parent_sets,
                    &o.edges,
                    &undecided_singletons(s),
                )
            })
            .collect();
        out.push(("+ neighbourhood orientation", results));
        // One level further out: each member's own reading through its neighbours.
        let readings: BTreeMap<String, orient::NeighbourhoodOrientation> = searches
            .iter()
            .map(|s| s.target.clone())
            .zip(first)
            .collect();
        let results = searches
            .par_iter()
            .map(|s| {
                let o = orient::orient_further(s, &by_name, &readings);
                read(
                    o.outcome,
                    &o.parent_sets,
                    &o.edges,
                    &undecided_singletons(s),
                )
            })
            .collect();
        out.push(("+ neighbourhood orientation, two levels", results));
    }
    if settings.tiers {
        let tiers = topological_tiers(parents);
        let results = searches
            .iter()
            .map(|s| {
                let k = knowledge::apply(s, &tiers);
                read(
                    k.outcome,
                    &k.parent_sets,
                    &k.edges,
                    &undecided_singletons(s),
                )
            })
            .collect();
        out.push(("+ tiers (published order), no screening", results));
        // As `analyze` reads knowledge: a lone member the tiers make a cause passes the screening
        // check first.
        let results = searches
            .par_iter()
            .map(|s| {
                let k = knowledge::read(data, s, &tiers, &settings.rule);
                read(
                    k.outcome,
                    &k.parent_sets,
                    &k.edges,
                    &undecided_singletons(s),
                )
            })
            .collect();
        out.push(("+ tiers (published order)", results));
    }
    out
}

/// The variants beside the data alone: identified, exact, wrong claims, conflicts, and how many
/// open edges each variant directed and how many of those directions are wrong.
fn print_variants(results: &[NodeResult], variants: &[(&'static str, Vec<VariantResult>)]) {
    println!(
        "\n| variant | targets | identified | exact | wrong claims (targets) | conflict | open edges directed | wrong directions |"
    );
    println!("|---|---|---|---|---|---|---|---|");
    let data_alone: Vec<VariantResult> = results
        .iter()
        .map(|r| VariantResult {
            outcome: r.outcome,
            claimed: match r.outcome {
                Outcome::Identified => r.claimed.clone(),
                _ => BTreeSet::new(),
            },
            oriented: Vec::new(),
        })
        .collect();
    let mut notes = Vec::new();
    for (label, variant) in std::iter::once(&("data alone", data_alone)).chain(variants) {
        let (mut identified, mut exact, mut wrong, mut wrong_nodes, mut conflict) = (0, 0, 0, 0, 0);
        let (mut directed, mut wrong_directions) = (0, 0);
        for (r, v) in results.iter().zip(variant) {
            let wrong_here = v.claimed.difference(&r.parents).count();
            identified += usize::from(v.outcome == Outcome::Identified);
            exact += usize::from(v.outcome == Outcome::Identified && v.claimed == r.parents);
            wrong += wrong_here;
            wrong_nodes += usize::from(wrong_here > 0);
            conflict += usize::from(v.outcome == Outcome::Conflict);
            for (member, into) in &v.oriented {
                directed += 1;
                // A direction is wrong when the true graph has the edge the other way; an edge
                // the true graph lacks is counted wrong too (the data's link is then wrong).
                let right = match into {
                    true => r.parents.contains(member),
                    false => r.adjacent.contains(member) && !r.parents.contains(member),
                };
                if !right {
                    wrong_directions += 1;
                    notes.push(format!(
                        "  {label}: {} {} '{}' wrongly (true parents {})",
                        r.name,
                        if *into {
                            "takes as cause"
                        } else {
                            "takes as effect"
                        },
                        member,
                        names(&r.parents)
                    ));
                }
            }
            if label != &"data alone"
                && v.outcome == Outcome::Identified
                && r.outcome != Outcome::Identified
            {
                notes.push(format!(
                    "  {label}: {} newly identified: claimed {} vs true {}{}",
                    r.name,
                    names(&v.claimed),
                    names(&r.parents),
                    if wrong_here > 0 { " — WRONG" } else { "" }
                ));
            }
            if label != &"data alone"
                && v.outcome == Outcome::Conflict
                && r.outcome != Outcome::Conflict
            {
                notes.push(format!(
                    "  {label}: {} conflict (true parents {})",
                    r.name,
                    names(&r.parents)
                ));
            }
        }
        println!(
            "| {label} | {} | {identified} | {exact} | {wrong} ({wrong_nodes} nodes) | {conflict} | {directed} | {wrong_directions} |",
            results.len()
        );
    }
    for n in notes {
        println!("{n}");
    }
}

fn names(set: &BTreeSet<String>) -> String {
    if set.is_empty() {
        "∅".to_string()
    } else {
        set.iter().cloned().collect::<Vec<_>>().join(",")
    }
}

fn print_nodes(results: &[NodeResult]) {
    println!("\n| target | tree | true parents | independent parents | outcome | claimed / candidates | MB found | MB missed | MB extra |");
    println!("|---|---|---|---|---|---|---|---|---|");
    for r in results {
        let missed: BTreeSet<String> = r.blanket.difference(&r.boundary).cloned().collect();
        let extra: BTreeSet<String> = r.boundary.difference(&r.blanket).cloned().collect();
        println!(
            "| {} | {} | {} | {} | {} | {} | {} | {} | {} |",
            r.name,
            if r.tree { "yes" } else { "no" },
            names(&r.parents),
            match (r.parents.len(), r.independent_parents) {
                (0 | 1, _) => "—",
                (_, true) => "yes",
                (_, false) => "no",
            },
            r.outcome.name(),
            names(&r.claimed),
            r.boundary.len(),
            names(&missed),
            names(&extra)
        );
    }
}

/// Counts over one group of targets.
#[derive(Default)]
struct Tally {
    nodes: usize,
    identified: usize,
    exact: usize,
    wrong_claims: usize,
    identified_with_wrong: usize,
    jaccard_sum: f64,
    not_identifiable: usize,
    ni_with_parent: usize,
    ni_parent_among_candidates: usize,
    ni_candidates: usize,
    ni_candidates_not_adjacent: usize,
    conflict: usize,
    empty: usize,
    two_or_more_parents: usize,
    two_or_more_exact: usize,
    independent_parents: usize,
    independent_parents_exact: usize,
    blanket_found: usize,
    blanket_total: usize,
    boundary_extra: usize,
}

impl Tally {
    fn of<'a>(results: impl Iterator<Item = &'a NodeResult>) -> Tally {
        let mut t = Tally::default();
        for r in results {
            t.nodes += 1;
            let exact = r.outcome == Outcome::Identified && r.claimed == r.parents;
            match r.outcome {
                Outcome::Identified => {
                    t.identified += 1;
                    t.exact += usize::from(exact);
                    t.wrong_claims += r.wrong_claims();
                    t.identified_with_wrong += usize::from(r.wrong_claims() > 0);
                    t.jaccard_sum += r.jaccard();
                }
                Outcome::NotIdentifiable => {
                    t.not_identifiable += 1;
                    t.ni_candidates += r.claimed.len();
                    t.ni_candidates_not_adjacent += r.claimed.difference(&r.adjacent).count();
                    if !r.parents.is_empty() {
                        t.ni_with_parent += 1;
                        t.ni_parent_among_candidates +=
                            usize::from(!r.claimed.is_disjoint(&r.parents));
                    }
                }
                Outcome::Conflict => t.conflict += 1,
                Outcome::EmptyBoundary => t.empty += 1,
            }
            if r.parents.len() >= 2 {
                t.two_or_more_parents += 1;
                t.two_or_more_exact += usize::from(exact);
            }
            if r.independent_parents {
                t.independent_parents += 1;
                t.independent_parents_exact += usize::from(exact);
            }
            t.blanket_total += r.blanket.len();
            t.blanket_found += r.blanket.intersection(&r.boundary).count();
            t.boundary_extra += r.boundary.difference(&r.blanket).count();
        }
        t
    }

    fn row(&self, label: &str) -> String {
        let jaccard = if self.identified == 0 {
            "—".to_string()
        } else {
            format!("{:.3}", self.jaccard_sum / self.identified as f64)
        };
        format!(
            "| {label} | {} | {} | {} | {} ({} nodes) | {jaccard} | {} | {}/{} | {}/{} | {} | {} | {}/{} | {}/{} | {}/{} | {} |",
            self.nodes,
            self.identified,
            self.exact,
            self.wrong_claims,
            self.identified_with_wrong,
            self.not_identifiable,
            self.ni_parent_among_candidates,
            self.ni_with_parent,
            self.ni_candidates_not_adjacent,
            self.ni_candidates,
            self.conflict,
            self.empty,
            self.two_or_more_exact,
            self.two_or_more_parents,
            self.independent_parents_exact,
            self.independent_parents,
            self.blanket_found,
            self.blanket_total,
            self.boundary_extra
        )
    }
}

fn print_summary(results: &[NodeResult]) {
    println!(
        "\n| targets | nodes | identified | exact | wrong claims | mean Jaccard | not identifiable | \
         true parent among candidates | candidates not adjacent | conflict | empty boundary | ≥2 parents: exact | independent parents: exact | MB members found | MB extra |"
    );
    println!("|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|");
    println!(
        "{}",
        Tally::of(results.iter().filter(|r| r.tree)).row("tree")
    );
    println!(
        "{}",
        Tally::of(results.iter().filter(|r| !r.tree)).row("non-tree")
    );
    println!("{}", Tally::of(results.iter()).row("all"));
}

/// Every identified target with a wrong claim or an inexact set, and every conflict; then the first
/// failing step of every findable target that was missed.
fn print_notable(results: &[NodeResult]) {
    let mut steps: BTreeMap<&str, Vec<&str>> = BTreeMap::new();
    for r in results {
        if let Some(step) = r.first_failing_step() {
            steps.entry(step).or_default().push(&r.name);
        }
    }
    let findable = results.iter().filter(|r| r.independent_parents).count();
    let missed: usize = steps.values().map(Vec::len).sum();
    println!(
        "  findable targets (two or more pairwise independent parents): {findable}, found exactly: {}, \
         missed: {missed}",
        findable - missed
    );
    for (step, nodes) in &steps {
        println!(
            "  first failing step {step}: {} ({})",
            nodes.len(),
            nodes.join(", ")
        );
    }
    for r in results {
        let inexact = r.outcome == Outcome::Identified && r.claimed != r.parents;
        if inexact || r.outcome == Outcome::Conflict {
            let wrong: BTreeSet<String> = r.claimed.difference(&r.parents).cloned().collect();
            let passing: Vec<String> = r.passing.iter().map(names).collect();
            println!(
                "  {} {} ({}): claimed {} vs true {}; not parents: {}; passing components: {}",
                r.outcome.name(),
                r.name,
                if r.tree { "tree" } else { "non-tree" },
                names(&r.claimed),
                names(&r.parents),
                names(&wrong),
                passing.join(" | ")
            );
        }
    }
}
