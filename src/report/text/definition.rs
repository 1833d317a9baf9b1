//! A chain's definition in words, by walking the data `report.json`
//! records (so a new chain setting shows without renderer changes), and the
//! Chains table. Part of [`crate::report::text`].

use super::*;

/// The opening sentence of the Chains section of both renderings.
pub const CHAINS_INTRO: &str = "Each chain as run: its tokenizer, every step with its parameters \
     (stemming language and Snowball generation, hashtag vocabulary, …) and, for routed chains, \
     the routing settings and each language's branch.";

/// The parts of a chain's definition, in words: `(part, settings)` rows
/// such as `("tokenizer", "words")`, `("steps", "lowercase → stem (language
/// en, generation current)")`, `("route", "languages en, de; min_confidence
/// 0.5; …")`, `("route › branches › language de", "tokenizer words; steps
/// …")`, `("route › fallback", …)`.
///
/// Rendered from the chain as `report.json` records it (the serialized
/// chain specification), by walking the data and not by naming its fields,
/// so every setting a chain has, including ones added to chain files
/// later, is shown: the tokenizer, each step with every parameter
/// (stemming language and Snowball generation, the hashtag vocabulary …),
/// the routing settings and each branch. The `description` comes first
/// when there is one; the name is not a part.
pub fn definition_parts(chain: &serde_json::Value) -> Vec<(String, String)> {
    let mut parts = Vec::new();
    let Some(map) = chain.as_object() else {
        parts.push(("definition".to_string(), inline(chain)));
        return parts;
    };
    if let Some(d) = map.get("description").and_then(serde_json::Value::as_str) {
        parts.push(("description".to_string(), d.to_string()));
    }
    for (key, value) in ordered(map) {
        if key != "name" && key != "description" {
            expand(key.to_string(), value, &mut parts);
        }
    }
    parts
}

/// A chain's whole definition on one line (its parts without the
/// description, `part: settings` joined by `; `).
pub fn definition_line(chain: &serde_json::Value) -> String {
    definition_parts(chain)
        .into_iter()
        .filter(|(part, _)| part != "description")
        .map(|(part, text)| format!("{part}: {text}"))
        .collect::<Vec<_>>()
        .join("; ")
}

/// The recorded definition of chain `name` in a report, if any (`run`).
pub fn chain_definition<'a>(r: &'a Report, name: &str) -> Option<&'a serde_json::Value> {
    r.settings.chains.iter().find(|c| c.get("name").and_then(|n| n.as_str()) == Some(name))
}

/// Object keys in reading order: the tokenizer before the steps (a chain
/// reads tokenizer first), the rest in the data's (byte) order.
fn ordered(map: &serde_json::Map<String, serde_json::Value>) -> Vec<(&String, &serde_json::Value)> {
    const FIRST: [&str; 2] = ["tokenizer", "steps"];
    let rank = |k: &str| FIRST.iter().position(|f| *f == k).unwrap_or(FIRST.len());
    let mut entries: Vec<(&String, &serde_json::Value)> = map.iter().collect();
    entries.sort_by(|a, b| rank(a.0).cmp(&rank(b.0)).then_with(|| a.0.cmp(b.0)));
    entries
}

/// A step: an object with a `step` name.
fn is_step(v: &serde_json::Value) -> bool {
    v.get("step").is_some_and(serde_json::Value::is_string)
}

/// Whether a value gets rows of its own: an object, or a list of objects
/// that are not steps (a route's branches).
fn is_nested(v: &serde_json::Value) -> bool {
    match v {
        serde_json::Value::Object(_) => true,
        serde_json::Value::Array(items) => {
            !items.is_empty() && items.iter().all(|i| i.is_object() && !is_step(i))
        }
        _ => false,
    }
}

/// Rows of `value` under `label`: simple settings on one row, each nested
/// object or list element on a row of its own (`label › key`).
fn expand(label: String, value: &serde_json::Value, parts: &mut Vec<(String, String)>) {
    match value {
        serde_json::Value::Object(map) if map.values().any(is_nested) => {
            let simple: Vec<String> = ordered(map)
                .into_iter()
                .filter(|(_, v)| !is_nested(v))
                .map(|(k, v)| format!("{k} {}", inline(v)))
                .collect();
            if !simple.is_empty() {
                parts.push((label.clone(), simple.join("; ")));
            }
            for (k, v) in ordered(map).into_iter().filter(|(_, v)| is_nested(v)) {
                expand(format!("{label} › {k}"), v, parts);
            }
        }
        serde_json::Value::Array(items) if is_nested(value) => {
            for (i, item) in items.iter().enumerate() {
                let (name, rest) = identify(item, i);
                parts.push((format!("{label} › {name}"), inline(&rest)));
            }
        }
        _ => parts.push((label, inline(value))),
    }
}

/// What names one element of a list of objects (`language en` for a
/// route's branch): its `name` or `language`, else its first text setting,
/// else its position; and the element without that setting.
fn identify(item: &serde_json::Value, index: usize) -> (String, serde_json::Value) {
    let mut rest = item.clone();
    let Some(map) = rest.as_object_mut() else { return (format!("#{}", index + 1), rest) };
    let key = ["name", "language"]
        .into_iter()
        .find(|k| map.get(*k).is_some_and(serde_json::Value::is_string))
        .map(str::to_string)
        .or_else(|| map.iter().find(|(_, v)| v.is_string()).map(|(k, _)| k.clone()));
    match key.and_then(|k| map.remove(&k).map(|v| (k, v))) {
        Some((k, v)) => (format!("{k} {}", inline(&v)), rest),
        None => (format!("#{}", index + 1), rest),
    }
}

/// A value in words: text as it is, a list of steps as `a → b (k v)`, other
/// lists joined by commas, an object as `key value; key value`.
fn inline(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::Null => "none".to_string(),
        serde_json::Value::String(s) => s.clone(),
        serde_json::Value::Array(items) if items.is_empty() => "none".to_string(),
        serde_json::Value::Array(items) if items.iter().all(is_step) => {
            items.iter().map(step_text).collect::<Vec<_>>().join(" → ")
        }
        serde_json::Value::Array(items) => {
            let sep =
                if items.iter().any(|i| i.is_object() || i.is_array()) { " | " } else { ", " };
            items.iter().map(inline).collect::<Vec<_>>().join(sep)
        }
        serde_json::Value::Object(map) => ordered(map)
            .into_iter()
            .map(|(k, v)| format!("{k} {}", inline(v)))
            .collect::<Vec<_>>()
            .join("; "),
        other => other.to_string(),
    }
}

/// One step: its name, then every parameter (`stem (language en, generation
/// current)`, `length (min 2, max 30)`): the language first, a range in
/// reading order.
fn step_text(step: &serde_json::Value) -> String {
    let name = step.get("step").and_then(serde_json::Value::as_str).unwrap_or("?");
    let Some(map) = step.as_object() else { return name.to_string() };
    let mut params: Vec<(&String, &serde_json::Value)> =
        map.iter().filter(|(k, _)| k.as_str() != "step").collect();
    const FIRST: [&str; 3] = ["language", "min", "max"];
    params.sort_by_key(|(k, _)| {
        (FIRST.iter().position(|f| f == k).unwrap_or(FIRST.len()), k.as_str())
    });
    if params.is_empty() {
        return name.to_string();
    }
    let list: Vec<String> = params.iter().map(|(k, v)| format!("{k} {}", inline(v))).collect();
    format!("{name} ({})", list.join(", "))
}

/// Every chain's definition as a table (`run`; `None` for `score`, whose
/// systems are run files).
pub fn definitions_table(r: &Report) -> Option<Table> {
    if r.settings.chains.is_empty() {
        return None;
    }
    let mut rows = Vec::new();
    for chain in &r.settings.chains {
        let name = chain.get("name").and_then(serde_json::Value::as_str).unwrap_or("?");
        for (i, (part, text)) in definition_parts(chain).into_iter().enumerate() {
            let first = if i == 0 { vec![code(name)] } else { Vec::new() };
            rows.push(vec![first, vec![t(part)], vec![t(text)]]);
        }
    }
    Some(Table {
        header: ["chain", "part", "definition"].map(|h| vec![t(h)]).to_vec(),
        numeric: vec![false; 3],
        row_headers: true,
        rows,
    })
}
