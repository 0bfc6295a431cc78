//! The settings' keys, and problems that name them without choosing how.

/// One setting: its key in a study file or plan, its flag on the command line.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Key {
    /// Target columns (`--target`).
    Targets,
    /// Columns left out.
    Exclude,
    /// The only columns considered besides the target.
    Candidates,
    /// Study seed.
    Seed,
    /// Predictor scaling.
    Scaling,
    /// Level of the parent step's independence tests.
    Alpha,
    /// Resampling replicates.
    Replicates,
    /// Resampling plan.
    Resample,
    /// Share of rows per subsample.
    Fraction,
    /// π_thr.
    StabilityThreshold,
    /// Calibrated or natural selection.
    StoppingRule,
    /// Level of the selection tests.
    SelectionAlpha,
    /// Most draws per selection test.
    Permutations,
    /// Orient edges at the target through the parent searches of its neighbours.
    NeighbourhoodOrientation,
    /// The character between values.
    Delimiter,
    /// Decimal commas.
    DecimalComma,
    /// Cell texts that mean missing.
    MissingTokens,
    /// What to do with rows that miss a value.
    Missing,
    /// Background knowledge: tiers, forbidden and required edges (a table; no flag).
    Knowledge,
    /// Document control: the title (`[document]` `title`).
    Title,
    /// Document control: the document or protocol identifier.
    DocumentId,
    /// Document control: what the analysis is for.
    Purpose,
    /// Document control: the document's version.
    DocumentVersion,
    /// Document control: who prepared it.
    PreparedBy,
}

impl Key {
    /// Every key, in the order a study file documents them.
    pub const ALL: [Key; 24] = [
        Key::Targets,
        Key::Exclude,
        Key::Candidates,
        Key::Seed,
        Key::Scaling,
        Key::Alpha,
        Key::Replicates,
        Key::Resample,
        Key::Fraction,
        Key::StabilityThreshold,
        Key::StoppingRule,
        Key::SelectionAlpha,
        Key::Permutations,
        Key::NeighbourhoodOrientation,
        Key::Delimiter,
        Key::DecimalComma,
        Key::MissingTokens,
        Key::Missing,
        Key::Knowledge,
        Key::Title,
        Key::DocumentId,
        Key::Purpose,
        Key::DocumentVersion,
        Key::PreparedBy,
    ];

    /// The key in a study file or plan table.
    pub fn name(self) -> &'static str {
        match self {
            Key::Targets => "targets",
            Key::Exclude => "exclude",
            Key::Candidates => "candidates",
            Key::Seed => "seed",
            Key::Scaling => "scaling",
            Key::Alpha => "alpha",
            Key::Replicates => "replicates",
            Key::Resample => "resample",
            Key::Fraction => "fraction",
            Key::StabilityThreshold => "stability_threshold",
            Key::StoppingRule => "stopping_rule",
            Key::SelectionAlpha => "selection_alpha",
            Key::Permutations => "permutations",
            Key::NeighbourhoodOrientation => "neighbourhood_orientation",
            Key::Delimiter => "delimiter",
            Key::DecimalComma => "decimal_comma",
            Key::MissingTokens => "missing_tokens",
            Key::Missing => "missing",
            Key::Knowledge => "knowledge",
            Key::Title => "document.title",
            Key::DocumentId => "document.id",
            Key::Purpose => "document.purpose",
            Key::DocumentVersion => "document.version",
            Key::PreparedBy => "document.prepared_by",
        }
    }

    /// The key whose name is `name`.
    pub fn named(name: &str) -> Option<Key> {
        Key::ALL.into_iter().find(|k| k.name() == name)
    }

    /// The id of the command-line argument (the field of `analyze`'s arguments).
    pub fn arg_id(self) -> &'static str {
        match self {
            Key::Targets => "target",
            Key::Title => "title",
            Key::DocumentId => "document_id",
            Key::Purpose => "purpose",
            Key::DocumentVersion => "document_version",
            Key::PreparedBy => "prepared_by",
            other => other.name(),
        }
    }

    /// Whether the command line has a flag for this setting (knowledge comes from a study file
    /// only).
    pub fn has_flag(self) -> bool {
        self != Key::Knowledge
    }

    /// The command-line flag: `--stability-threshold`; for knowledge, which has none, the study
    /// file's table.
    pub fn flag(self) -> String {
        match self.has_flag() {
            true => format!("--{}", self.arg_id().replace('_', "-")),
            false => format!("[{}]", self.name()),
        }
    }
}

/// How a message names a setting.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Naming {
    /// As a command-line flag (`--selection-alpha`).
    Flags,
    /// As a key of a study file or plan (`selection_alpha`).
    Keys,
}

impl Naming {
    /// The name of `key` in this naming.
    pub fn of(self, key: Key) -> String {
        match self {
            Naming::Flags => key.flag(),
            Naming::Keys => key.name().to_string(),
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
enum Part {
    Text(String),
    Key(Key),
}

/// One problem with the settings: the key at fault, and a sentence that may name other keys. The
/// sentence is rendered for the front end that reports it ([`SettingProblem::render`]).
#[derive(Clone, Debug, PartialEq)]
pub struct SettingProblem {
    /// The setting at fault (where a study file or plan points).
    pub key: Key,
    parts: Vec<Part>,
    /// The text inside the key's value that is at fault (a column named in a list), where a file
    /// can point at it rather than at the key.
    pub value: Option<String>,
}

impl SettingProblem {
    /// A problem whose sentence starts with the key's name: `alpha 1.5 is not a level…`.
    pub fn of(key: Key) -> SettingProblem {
        SettingProblem {
            key,
            parts: vec![Part::Key(key)],
            value: None,
        }
    }

    /// A problem about `key` whose sentence is free (it may name the key later, or not at all).
    pub fn about(key: Key) -> SettingProblem {
        SettingProblem {
            key,
            parts: Vec::new(),
            value: None,
        }
    }

    /// The problem points at `value` inside the key's value.
    pub fn at_value(mut self, value: impl Into<String>) -> SettingProblem {
        self.value = Some(value.into());
        self
    }

    /// Appends text.
    pub fn text(mut self, text: impl Into<String>) -> SettingProblem {
        self.parts.push(Part::Text(text.into()));
        self
    }

    /// Appends the name of a key.
    pub fn name(mut self, key: Key) -> SettingProblem {
        self.parts.push(Part::Key(key));
        self
    }

    /// The sentence, naming keys as `naming` does.
    pub fn render(&self, naming: Naming) -> String {
        self.parts
            .iter()
            .map(|p| match p {
                Part::Text(t) => t.clone(),
                Part::Key(k) => naming.of(*k),
            })
            .collect()
    }
}

/// Every problem as one line, named as the command line names settings, separated by "; ".
pub fn render_flags(problems: &[SettingProblem]) -> String {
    problems
        .iter()
        .map(|p| p.render(Naming::Flags))
        .collect::<Vec<_>>()
        .join("; ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_key_is_named_once_and_read_back_by_its_name() {
        for key in Key::ALL {
            assert_eq!(Key::named(key.name()), Some(key));
            assert!(!key.flag().contains('_'), "{}", key.flag());
        }
        let mut names: Vec<&str> = Key::ALL.iter().map(|k| k.name()).collect();
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), Key::ALL.len());
        assert_eq!(Key::StabilityThreshold.flag(), "--stability-threshold");
        assert_eq!(Key::Targets.flag(), "--target");
        assert_eq!(Key::DocumentId.flag(), "--document-id");
        assert_eq!(Key::PreparedBy.name(), "document.prepared_by");
    }

    #[test]
    fn a_problem_names_keys_as_flags_or_as_file_keys() {
        let p = SettingProblem::of(Key::Fraction)
            .text(" 0.3 applies to ")
            .name(Key::Resample)
            .text(" subsample only");
        assert_eq!(
            p.render(Naming::Flags),
            "--fraction 0.3 applies to --resample subsample only"
        );
        assert_eq!(
            p.render(Naming::Keys),
            "fraction 0.3 applies to resample subsample only"
        );
    }
}
