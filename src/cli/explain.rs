//! `postassay explain`: why each chain finds (or misses) one post for one
//! query.

use std::io::Write;
use std::process::ExitCode;

use clap::{Args, ValueEnum};

use postassay::bench::explain::{self, ExplainPlan, Explanation};
use postassay::ids::{PostId, QueryId};
use postassay::search;

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
            (Some(r), Some(sc)) if c.fused => s.push_str(&format!(
                "  rank {r}, fused score {sc:.4} (reciprocal rank over {} fields, k = {})\n",
                c.fields.len(),
                search::FUSION_K
            )),
            (Some(r), Some(sc)) => s.push_str(&format!("  rank {r}, BM25 score {sc:.4}\n")),
            _ => s.push_str("  not retrieved\n"),
        }
        for f in &c.fields {
            standing_lines(f, &mut s);
        }
    }
    s
}

/// One searched field's standing: its rank and BM25 score, then one line per
/// matched term with its share and what the share is made of.
fn standing_lines(f: &search::FieldStanding, out: &mut String) {
    let (Some(rank), Some(bm25)) = (f.rank, f.bm25) else {
        out.push_str(&format!("  in {}: not retrieved\n", f.field));
        return;
    };
    let fused =
        f.fused_share.map_or(String::new(), |x| format!(", adds {x:.4} to the fused score"));
    out.push_str(&format!("  in {}: rank {rank}, BM25 {bm25:.4}{fused}\n", f.field));
    let rows: Vec<[String; 5]> = f
        .terms
        .iter()
        .map(|t| {
            [
                t.term.clone(),
                format!("{:.4}", t.share),
                format!("{:.4} ({} of {} posts)", t.rarity, t.posts_with_term, t.posts),
                t.occurrences.to_string(),
                format!("{} vs {:.2}", t.length, t.mean_length),
            ]
        })
        .collect();
    let header = ["term", "share", "rarity", "times", "length vs mean"].map(String::from);
    let mut widths = header.clone().map(|h| h.chars().count());
    for row in &rows {
        for (w, cell) in widths.iter_mut().zip(row) {
            *w = (*w).max(cell.chars().count());
        }
    }
    for row in std::iter::once(&header).chain(&rows) {
        let cells: Vec<String> =
            row.iter().zip(widths).map(|(cell, w)| format!("{cell:<w$}")).collect();
        out.push_str(&format!("    {}\n", cells.join("  ").trim_end()));
    }
    let total: f64 = f.terms.iter().map(|t| t.share).sum();
    out.push_str(&format!(
        "    shares add up to {total:.4} (k1 = {}, b = {})\n",
        search::BM25_K1,
        search::BM25_B
    ));
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
