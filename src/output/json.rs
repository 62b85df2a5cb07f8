//! The small JSON documents of the commands without a schema of their own (intake, sweep,
//! track, compare): each names its schema and version beside plumb's version.

use crate::store::graph::Graph;

/// Version of the small JSON documents below (`plumb-intake`, `plumb-sweep`, `plumb-track`,
/// `plumb-comparison`); bumped on any change that could break a reader.
pub const DOCUMENT_VERSION: u32 = 1;

/// Any result as pretty JSON under `key`, with the document's schema name (`plumb-KEY`), its
/// version and plumb's version.
pub fn to_json<T: serde::Serialize>(key: &str, value: &T) -> String {
    let v = serde_json::json!({
        "schema": format!("plumb-{key}"),
        "schema_version": DOCUMENT_VERSION,
        "plumb_version": env!("CARGO_PKG_VERSION"),
        key: value,
    });
    let mut s = serde_json::to_string_pretty(&v).unwrap_or_default();
    s.push('\n');
    s
}

/// What was read, as the `plumb-intake` document.
pub fn intake_json(g: &Graph) -> String {
    #[derive(serde::Serialize)]
    struct Out<'a> {
        schema: &'static str,
        schema_version: u32,
        plumb_version: &'static str,
        intake: &'a crate::store::intake::Intake,
        degree: crate::store::graph::DegreeSummary,
        store_bytes: u64,
    }
    let out = Out {
        schema: "plumb-intake",
        schema_version: DOCUMENT_VERSION,
        plumb_version: env!("CARGO_PKG_VERSION"),
        intake: &g.intake,
        degree: g.degree_summary(),
        store_bytes: g.store_bytes(),
    };
    let mut s = serde_json::to_string_pretty(&out).unwrap_or_default();
    s.push('\n');
    s
}
