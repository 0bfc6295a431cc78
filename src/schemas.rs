//! JSON Schemas (draft 2020-12) of every JSON file forebear writes for others to read, derived from
//! the types that write them, so a schema cannot drift from the files. The published copies are in
//! `docs/schemas/`; `tests/schemas.rs` checks that they are current and that real outputs validate.

use schemars::{generate::SchemaSettings, JsonSchema};
use serde_json::Value;

/// One published schema: its file name in `docs/schemas/`, the layout version it describes, and
/// the schema itself.
pub struct Published {
    /// File name under `docs/schemas/`.
    pub file: &'static str,
    /// The layout version (the files' own `schema` member).
    pub layout: &'static str,
    /// The JSON Schema.
    pub schema: Value,
}

/// Every published schema.
pub fn all() -> Vec<Published> {
    vec![
        derive::<crate::finding::Finding>(
            "result.schema.json",
            crate::finding::SCHEMA,
            "result.json: the findings of one target and their digest",
        ),
        derive::<crate::manifest::Manifest>(
            "manifest.schema.json",
            crate::manifest::MANIFEST_SCHEMA,
            "manifest.json: what binds a dossier to its data, settings, results and files",
        ),
        derive::<crate::verify::Report>(
            "verification.schema.json",
            crate::verify::REPORT_SCHEMA,
            "the report of `forebear verify --json`",
        ),
        derive::<crate::batch::Summary>(
            "batch-summary.schema.json",
            crate::batch::BATCH_SCHEMA,
            "summary.json of `forebear batch`",
        ),
        derive::<crate::targets::output::TargetsSummary>(
            "targets-summary.schema.json",
            crate::targets::output::TARGETS_SCHEMA,
            "summary.json of an analysis of several targets",
        ),
        derive::<crate::sign::statement::Statement>(
            "signature.schema.json",
            crate::sign::statement::STATEMENT_SCHEMA,
            "a signature statement in signatures/ (`forebear sign`)",
        ),
        derive::<crate::qualify::Record>(
            "qualification.schema.json",
            crate::qualify::record::QUALIFICATION_SCHEMA,
            "qualification.json of `forebear qualify`",
        ),
    ]
}

fn derive<T: JsonSchema>(file: &'static str, layout: &'static str, what: &str) -> Published {
    let generator = SchemaSettings::draft2020_12().into_generator();
    let mut schema = generator.into_root_schema_for::<T>().to_value();
    if let Value::Object(map) = &mut schema {
        map.insert("title".into(), Value::from(layout));
        map.insert(
            "description".into(),
            Value::from(format!("{what} (layout {layout})")),
        );
        // A file of another layout version is not this schema's file.
        if let Some(Value::Object(member)) =
            map.get_mut("properties").and_then(|p| p.get_mut("schema"))
        {
            member.insert("const".into(), Value::from(layout));
        }
    }
    Published {
        file,
        layout,
        schema,
    }
}
