//! The tables both renderings draw alike ([`Table`]): cost, routing and the
//! queries that moved most. Part of [`crate::report::text`].

use super::*;

/// A table both renderings draw alike: header cells, then rows of cells,
/// each cell a run of [`Span`]s.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Table {
    /// Column headings.
    pub header: Vec<Vec<Span>>,
    /// Whether each column holds numbers (right-aligned in HTML).
    pub numeric: Vec<bool>,
    /// Whether the first cell of each row heads the row (`<th scope="row">`).
    pub row_headers: bool,
    /// The rows.
    pub rows: Vec<Vec<Vec<Span>>>,
}

impl Table {
    /// GitHub-flavoured Markdown (`|` and line breaks inside cells escaped).
    pub fn markdown(&self) -> String {
        let cell = |c: &[Span]| spans_markdown(c).replace('|', "\\|").replace(['\n', '\r'], " ");
        let mut s = String::new();
        let head: Vec<String> = self.header.iter().map(|c| cell(c)).collect();
        s.push_str(&format!("| {} |\n|", head.join(" | ")));
        s.push_str(&"---|".repeat(self.header.len()));
        s.push('\n');
        for row in &self.rows {
            let cells: Vec<String> = row.iter().map(|c| cell(c)).collect();
            s.push_str(&format!("| {} |\n", cells.join(" | ")));
        }
        s
    }

    /// An HTML table in a horizontally scrolling wrapper (escaped).
    pub fn html(&self) -> String {
        let mut s = String::from("<div class=\"scroll\"><table>\n<thead><tr>");
        for h in &self.header {
            s.push_str(&format!("<th scope=\"col\">{}</th>", spans_html(h)));
        }
        s.push_str("</tr></thead>\n<tbody>\n");
        for row in &self.rows {
            s.push_str("<tr>");
            for (i, c) in row.iter().enumerate() {
                let num = if self.numeric.get(i).copied().unwrap_or(false) {
                    " class=\"num\""
                } else {
                    ""
                };
                if i == 0 && self.row_headers {
                    s.push_str(&format!("<th scope=\"row\">{}</th>", spans_html(c)));
                } else {
                    s.push_str(&format!("<td{num}>{}</td>", spans_html(c)));
                }
            }
            s.push_str("</tr>\n");
        }
        s.push_str("</tbody>\n</table></div>\n");
        s
    }
}

/// The cost table: per chain, index size, distinct terms, tokens per post
/// and posts per field. `None` when no system has a cost (`score`).
pub fn cost_table(r: &Report) -> Option<Table> {
    let rows: Vec<Vec<Vec<Span>>> = r
        .systems
        .iter()
        .filter_map(|sys| {
            let c = sys.cost.as_ref()?;
            let fields: Vec<String> =
                c.posts_per_field.iter().map(|(k, v)| format!("{k}: {v}")).collect();
            Some(vec![
                vec![code(sys.name.as_str())],
                vec![t(bytes(c.index_bytes))],
                vec![t(c.distinct_terms.to_string())],
                vec![t(format!("{:.1}", c.mean_tokens_per_post))],
                vec![t(fields.join(", "))],
            ])
        })
        .collect();
    if rows.is_empty() {
        return None;
    }
    Some(Table {
        header: ["chain", "index size", "distinct terms", "tokens per post", "posts per field"]
            .map(|h| vec![t(h)])
            .to_vec(),
        numeric: vec![false, true, true, true, false],
        row_headers: true,
        rows,
    })
}

/// The Timing section's note when a chain's index came from the index cache.
pub const CACHED_NOTE: &str = "A cached chain's index was not built in this run but read from the \
index cache (same corpus bytes, chain definition and tool version); its build time is the one \
measured when it was built.";

/// What the routing table shows, in one paragraph.
pub const ROUTING_NOTE: &str = "Each language field is scored with its own BM25 statistics (its \
     posts, their mean length, its document frequencies), as a separate index of that \
     language's posts would be. Where a query searches several fields, their rankings are \
     combined by the fusion rule shown, never by adding raw BM25 scores. A query whose \
     language has no branch searches the fallback field.";

/// The routing table: per language-routed chain, its detector, how posts
/// and queries find their field, which fields a query searches and how
/// their rankings are combined, what the fallback holds, posts per branch
/// and the queries whose language has no branch. `None` without routed
/// chains.
pub fn route_table(r: &Report) -> Option<Table> {
    let rows: Vec<Vec<Vec<Span>>> = r
        .systems
        .iter()
        .filter_map(|sys| {
            let g = sys.routing.as_ref()?;
            let posts: Vec<String> =
                g.posts_per_branch.iter().map(|(k, v)| format!("{k}: {v}")).collect();
            let share = if g.queries_run == 0 {
                String::new()
            } else {
                format!(" ({:.1}%)", 100.0 * g.queries_without_branch as f64 / g.queries_run as f64)
            };
            Some(vec![
                vec![code(sys.name.as_str())],
                vec![t(g.detector.clone())],
                vec![t(format!("posts {}, queries {}", g.posts, g.queries))],
                vec![code(g.search.clone())],
                vec![code(g.fusion.clone())],
                vec![code(g.fallback_posts.clone())],
                vec![t(posts.join(", "))],
                vec![t(format!("{} of {}{share}", g.queries_without_branch, g.queries_run))],
            ])
        })
        .collect();
    if rows.is_empty() {
        return None;
    }
    Some(Table {
        header: [
            "chain",
            "detector",
            "language taken as",
            "query searches",
            "fusion",
            "fallback holds",
            "posts per branch",
            "queries with no branch",
        ]
        .map(|h| vec![t(h)])
        .to_vec(),
        numeric: vec![false, false, false, false, false, false, false, true],
        row_headers: true,
        rows,
    })
}

/// The queries that moved most, one table per compared chain, in report order.
pub fn moved_tables(r: &Report, headline: &str) -> Vec<(String, Table)> {
    let base = r.settings.baseline.as_str();
    let rank = |x: Option<usize>| x.map_or_else(|| "–".to_string(), |v| v.to_string());
    let terms = |ts: &[String]| -> Vec<Span> {
        if ts.is_empty() {
            return vec![t("(none)")];
        }
        let mut out = Vec::new();
        for (i, x) in ts.iter().enumerate() {
            if i > 0 {
                out.push(t(" "));
            }
            out.push(code(x.as_str()));
        }
        out
    };
    let mut tables: Vec<(String, Table)> = Vec::new();
    for m in &r.moved {
        let sys = m.system.as_str();
        if tables.last().is_none_or(|(name, _)| name != sys) {
            let header = vec![
                vec![t("query")],
                vec![t(format!("Δ {headline}"))],
                vec![t("example post")],
                vec![t("grade")],
                vec![t("rank "), code(base), t(" → "), code(sys)],
                vec![t("matched by "), code(base)],
                vec![t("matched by "), code(sys)],
            ];
            let table = Table { header, numeric: vec![false; 7], row_headers: false, rows: vec![] };
            tables.push((sys.to_string(), table));
        }
        let post = match (&m.post_id, &m.post_text) {
            (Some(id), Some(text)) => vec![code(id.as_str()), t(format!(" {text}"))],
            (Some(id), None) => vec![code(id.as_str())],
            _ => vec![t("(no relevant post moved)")],
        };
        let row = vec![
            vec![code(m.query_id.as_str()), t(format!(" {}", m.query_text))],
            vec![t(signed(m.delta))],
            post,
            vec![t(m.grade.map_or_else(String::new, |g| g.to_string()))],
            vec![t(format!("{} → {}", rank(m.rank_baseline), rank(m.rank_system)))],
            terms(&m.matched_baseline),
            terms(&m.matched_system),
        ];
        if let Some((_, table)) = tables.last_mut() {
            table.rows.push(row);
        }
    }
    tables
}
