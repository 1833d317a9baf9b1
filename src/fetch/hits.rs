//! Taking a ranking out of an endpoint's JSON answer with the template's
//! pointers (RFC 6901 through `serde_json::Value::pointer`, plus the one `*`
//! step of the hit list). Input stage: a ranking read here becomes a run.
//!
//! Rules: the answer must be JSON; the list pointer must lead to an array
//! (an empty one is a query that found nothing); every hit must have an id
//! (a non-empty string or an integer, as formats.md says of corpus ids) and
//! a score (a JSON number). Hits keep the answer's order, which is their
//! rank. A post that comes back twice for one query keeps its first (best)
//! place and the repeat is counted, since a run lists a post once per query.

use crate::fetch::template::ResponsePaths;
use crate::ids::PostId;

/// Longest stretch of a response quoted in a message.
const EXCERPT_CHARS: usize = 200;

/// A query's ranking as taken from one answer.
#[derive(Debug, Clone, PartialEq)]
pub struct Ranking {
    /// Posts in rank order with their scores.
    pub hits: Vec<(PostId, f64)>,
    /// Repeated posts dropped.
    pub repeats: usize,
}

/// The start of a response body, whitespace runs shortened to one space, for
/// messages.
pub fn excerpt(body: &str) -> String {
    let flat: String = body.split_whitespace().collect::<Vec<_>>().join(" ");
    match flat.char_indices().nth(EXCERPT_CHARS) {
        Some((cut, _)) => format!("{}…", flat.get(..cut).unwrap_or("")),
        None => flat,
    }
}

/// Take at most `depth` hits out of `body`; the error says which pointer did
/// not match and how (the caller adds the query and the excerpt).
pub fn take_ranking(
    body: &str,
    paths: &ResponsePaths,
    depth: usize,
) -> std::result::Result<Ranking, String> {
    let json: serde_json::Value = serde_json::from_str(body)
        .map_err(|e| format!("expected a JSON answer, found text that is not JSON ({e})"))?;
    let list = json.pointer(&paths.hits.list).ok_or_else(|| {
        format!(
            "the hit list {:?} is not in the answer (no {:?})",
            paths.hits.written, paths.hits.list
        )
    })?;
    let list = list.as_array().ok_or_else(|| {
        format!(
            "the hit list {:?}: expected an array at {:?}, found {}",
            paths.hits.written,
            paths.hits.list,
            kind(list)
        )
    })?;
    let mut hits: Vec<(PostId, f64)> = Vec::new();
    let mut seen = std::collections::HashSet::new();
    let mut repeats = 0;
    for (i, element) in list.iter().enumerate() {
        if hits.len() == depth {
            break;
        }
        let place = i + 1;
        let hit = element.pointer(&paths.hits.each).ok_or_else(|| {
            format!(
                "hit {place}: no {:?} (from the hit list {:?})",
                paths.hits.each, paths.hits.written
            )
        })?;
        let id = match hit.pointer(&paths.id) {
            Some(serde_json::Value::String(s)) if !s.trim().is_empty() => s.trim().to_string(),
            Some(serde_json::Value::Number(n)) if n.is_i64() || n.is_u64() => n.to_string(),
            Some(other) => {
                return Err(format!(
                    "hit {place}: id {:?}: expected a non-empty string or an integer, found {}",
                    paths.id,
                    kind(other)
                ))
            }
            None => return Err(format!("hit {place}: no id at {:?}", paths.id)),
        };
        let score = match hit.pointer(&paths.score) {
            Some(serde_json::Value::Number(n)) => n.as_f64().filter(|x| x.is_finite()),
            _ => None,
        }
        .ok_or_else(|| {
            format!(
                "hit {place}: score {:?}: expected a number, found {}",
                paths.score,
                hit.pointer(&paths.score).map_or("nothing".to_string(), kind)
            )
        })?;
        if seen.insert(id.clone()) {
            hits.push((PostId::from(id), score));
        } else {
            repeats += 1;
        }
    }
    Ok(Ranking { hits, repeats })
}

/// What a JSON value is, for messages.
fn kind(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::Null => "null".into(),
        serde_json::Value::Bool(b) => format!("the boolean {b}"),
        serde_json::Value::Number(n) => format!("the number {n}"),
        serde_json::Value::String(s) => format!("the string {}", excerpt(&format!("{s:?}"))),
        serde_json::Value::Array(_) => "an array".into(),
        serde_json::Value::Object(_) => "an object".into(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fetch::template::HitsPointer;

    fn paths(list: &str, each: &str) -> ResponsePaths {
        ResponsePaths {
            hits: HitsPointer {
                written: format!("{list}/*{each}"),
                list: list.into(),
                each: each.into(),
            },
            id: "/id".into(),
            score: "/s".into(),
        }
    }

    #[test]
    fn pointer_with_escapes_integer_ids_repeats_and_depth() {
        // RFC 6901 §3: "~1" is "/", "~0" is "~" in a step; §4: a step on an
        // array is a decimal index.
        let body = r#"{"a/b": {"m~n": [ {"doc": {"id": 7, "s": 2.5}}, {"doc": {"id": "x", "s": 1}},
                      {"doc": {"id": 7, "s": 0.5}}, {"doc": {"id": "y", "s": -1e-3}} ]}}"#;
        let r = take_ranking(body, &paths("/a~1b/m~0n", "/doc"), 10).expect("matches");
        let hits: Vec<(String, f64)> = r.hits.iter().map(|(d, s)| (d.to_string(), *s)).collect();
        assert_eq!(hits, [("7".into(), 2.5), ("x".into(), 1.0), ("y".into(), -0.001)]);
        assert_eq!(r.repeats, 1);
        let two = take_ranking(body, &paths("/a~1b/m~0n", "/doc"), 2).expect("matches");
        assert_eq!(two.hits.len(), 2);
        let first =
            take_ranking(r#"[[{"id":"z","s":3}]]"#, &paths("/0", ""), 5).expect("index step");
        assert_eq!(first.hits, [(PostId::from("z"), 3.0)]);
    }

    #[test]
    fn mismatches_say_which_pointer_and_what_was_found() {
        let p = paths("/r", "");
        let cases = [
            ("{\"error\": \"no index\"}", "the hit list \"/r/*\" is not in the answer (no \"/r\")"),
            ("{\"r\": {\"id\": 1}}", "expected an array at \"/r\", found an object"),
            ("{\"r\": [{\"s\": 1}]}", "hit 1: no id at \"/id\""),
            ("{\"r\": [{\"id\": 1.5, \"s\": 1}]}", "hit 1: id \"/id\": expected a non-empty string or an integer, found the number 1.5"),
            ("{\"r\": [{\"id\": \"a\", \"s\": 1}, {\"id\": \"b\", \"s\": \"9\"}]}", "hit 2: score \"/s\": expected a number, found the string \"9\""),
            ("<html>busy</html>", "expected a JSON answer, found text that is not JSON"),
        ];
        for (body, expected) in cases {
            let err = take_ranking(body, &p, 10).expect_err("mismatch");
            assert!(err.contains(expected), "{err}");
        }
    }

    #[test]
    fn excerpt_is_flat_and_cut() {
        assert_eq!(excerpt("{\n  \"a\":\t1 }"), "{ \"a\": 1 }");
        let long = "é".repeat(300);
        assert_eq!(excerpt(&long).chars().count(), EXCERPT_CHARS + 1);
    }
}
