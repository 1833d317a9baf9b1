//! `postassay explain`: why each chain finds (or misses) one post for one
//! query.

use std::io::Write;
use std::process::ExitCode;

use clap::{Args, ValueEnum};

use postassay::bench::explain::{self, ExplainPlan, Explanation};
use postassay::ids::{PostId, QueryId};

use super::common::{ChainFlags, InputFlags};

#[derive(Debug, Clone, Copy, ValueEnum)]
enum Format {
    Text,
    Json,
}

#[derive(Debug, Args)]
pub struct ExplainArgs {
    /// The query id.
    #[arg(long, value_name = "QID")]
    query: String,
    /// The post id.
    #[arg(long, value_name = "DOC")]
    doc: String,
    #[command(flatten)]
    inputs: InputFlags,
    #[command(flatten)]
    chains: ChainFlags,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    format: Format,
}

pub fn execute(args: ExplainArgs) -> anyhow::Result<ExitCode> {
    let (corpus, queries, judgments) = args.inputs.resolve()?;
    let plan = ExplainPlan {
        corpus,
        queries,
        judgments: Some(judgments),
        chains: args.chains.resolve()?,
        query: QueryId::from(args.query.as_str()),
        post: PostId::from(args.doc.as_str()),
    };
    let explanation = explain::explain(&plan)?;
    let text = match args.format {
        Format::Json => serde_json::to_string_pretty(&explanation)? + "\n",
        Format::Text => render(&explanation),
    };
    std::io::stdout().lock().write_all(text.as_bytes())?;
    Ok(ExitCode::SUCCESS)
}

fn render(e: &Explanation) -> String {
    let mut s = format!(
        "query {} (\"{}\") · post {} (\"{}\") · grade {}\n",
        e.query_id,
        one_line(&e.query_text),
        e.post_id,
        one_line(&e.post_text),
        e.grade.map_or_else(|| "unjudged".to_string(), |g| g.to_string())
    );
    for c in &e.chains {
        s.push_str(&format!("\n{}\n", c.chain));
        s.push_str(&format!("  query terms:   {}\n", terms_by_field(&c.query_terms)));
        s.push_str(&format!("  post terms:    {} ({})\n", c.post_terms.join(" "), c.post_field));
        s.push_str(&format!(
            "  matched:       {}\n",
            if c.matched_terms.is_empty() {
                "(none)".to_string()
            } else {
                c.matched_terms.join(" ")
            }
        ));
        match (c.rank, c.score) {
            (Some(r), Some(sc)) => s.push_str(&format!("  rank {r}, BM25 score {sc:.4}\n")),
            _ => s.push_str("  not retrieved\n"),
        }
        if let Some(tree) = &c.explanation {
            s.push_str("  score explanation (tantivy):\n");
            explanation_lines(tree, 2, &mut s);
        }
    }
    s
}

/// A text as written (emoji sequences, accents and all: not Rust's escapes),
/// on one line: control characters such as line ends become spaces.
fn one_line(text: &str) -> String {
    text.chars().map(|c| if c.is_control() { ' ' } else { c }).collect()
}

/// Query terms, given as `field:term`, written as the post's terms are:
/// the terms, then their index field in parentheses (one group per field, in
/// the order the fields first appear).
fn terms_by_field(terms: &[String]) -> String {
    let mut groups: Vec<(&str, Vec<&str>)> = Vec::new();
    for term in terms {
        let (field, text) = term.split_once(':').unwrap_or(("", term.as_str()));
        match groups.iter_mut().find(|(f, _)| *f == field) {
            Some((_, texts)) => texts.push(text),
            None => groups.push((field, vec![text])),
        }
    }
    if groups.is_empty() {
        return "(none)".to_string();
    }
    let shown: Vec<String> =
        groups.iter().map(|(field, texts)| format!("{} ({field})", texts.join(" "))).collect();
    shown.join("; ")
}

/// A context entry of tantivy's explanation, readable: its term dump
/// `Term=Term(field=1, type=Str, "ferri")` becomes `term "ferri"`; other
/// entries are kept.
fn readable_context(entry: &str) -> String {
    match entry.strip_prefix("Term=Term(").and_then(|rest| rest.find('"').map(|i| &rest[i..])) {
        Some(quoted) => format!("term {}", quoted.strip_suffix(')').unwrap_or(quoted)),
        None => entry.to_string(),
    }
}

/// tantivy's score explanation as an indented tree, one node per line:
/// `value  description [context]`, children two spaces deeper.
fn explanation_lines(node: &serde_json::Value, depth: usize, out: &mut String) {
    let value = node.get("value").and_then(serde_json::Value::as_f64);
    let description = node.get("description").and_then(serde_json::Value::as_str).unwrap_or("");
    let context: Vec<String> = node
        .get("context")
        .and_then(serde_json::Value::as_array)
        .map(|c| c.iter().filter_map(serde_json::Value::as_str).map(readable_context).collect())
        .unwrap_or_default();
    let indent = "  ".repeat(depth);
    let value = value.map_or_else(|| "?".to_string(), |v| format!("{v:.4}"));
    out.push_str(&format!("{indent}{value}  {description}"));
    if !context.is_empty() {
        out.push_str(&format!(" [{}]", context.join("; ")));
    }
    out.push('\n');
    for child in node.get("details").and_then(serde_json::Value::as_array).into_iter().flatten() {
        explanation_lines(child, depth + 1, out);
    }
}
