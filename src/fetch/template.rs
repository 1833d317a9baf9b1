//! Request templates of `postassay fetch`: a TOML file, written by the user,
//! that says how to ask a search endpoint for one query's ranking and where
//! the ranking sits in the JSON answer. Input stage (it is read and checked
//! before any request is sent).
//!
//! ```toml
//! method = "POST"                          # GET (default) or POST
//! url = "https://search.example/posts/find?lang={lang:url}"
//! body = '''{"text": {text:json}, "size": {depth}}'''
//!
//! [headers]
//! Content-Type = "application/json"
//! Authorization = { env = "SEARCH_TOKEN", prefix = "Bearer " }
//!
//! [response]
//! hits = "/ranking/*"      # JSON Pointer (RFC 6901) with one `*` step
//! id = "/post"             # from each hit
//! score = "/weight"        # from each hit
//! ```
//!
//! Placeholders are a brace, a lowercase name, an optional `:` and escape,
//! and a closing brace: `{text:url}`, `{text:json}`, `{id:url}`, `{id:json}`,
//! `{lang:url}`, `{lang:json}` and `{depth}`. Any other brace is literal
//! text (JSON's own braces stay as written), but a lowercase word in braces
//! that is not one of these is an error, so a typo does not reach the
//! endpoint. In `url` only the `:url` escape is accepted: UTF-8 bytes
//! percent-encoded except RFC 3986's unreserved characters (§2.3: letters,
//! digits, `-` `.` `_` `~`), so a space is `%20`, `&` is `%26` and `#` is
//! `%23`, safe in a path segment and in a query value alike. In `body` only
//! `:json` is accepted: a whole JSON string literal with its quotes (RFC 8259
//! §7), or `null` for a query without a language; so the body is written
//! `"text": {text:json}`, not `"text": "{text:json}"`. `{depth}` is a
//! decimal integer in either place. A body is checked to be JSON once its
//! placeholders are filled with sample values.
//!
//! Secrets: a header value given as `{ env = "NAME" }` (optionally with a
//! `prefix`) is read from the environment variable `NAME` when the template
//! is read; a missing variable is an error naming the variable, never its
//! value. The value is held in [`Secret`], whose `Debug` hides it, and is
//! written only into the request.

use std::collections::BTreeMap;
use std::fmt;
use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::error::{Error, Result};
use crate::input::Query;

/// HTTP methods a template may use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
pub enum Method {
    /// No body; the query goes into the URL.
    #[serde(rename = "GET")]
    Get,
    /// A JSON body.
    #[serde(rename = "POST")]
    Post,
}

/// A header value read from the environment; `Debug` and `Display` never
/// show it.
#[derive(Clone, PartialEq, Eq)]
pub struct Secret(String);

impl Secret {
    /// The value, for the request only.
    pub fn expose(&self) -> &str {
        &self.0
    }
}

impl fmt::Debug for Secret {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("Secret(<hidden>)")
    }
}

/// A header value: literal text or a secret.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum HeaderValue {
    /// Written in the template.
    Plain(String),
    /// Read from an environment variable (prefix included).
    Secret(Secret),
}

impl HeaderValue {
    /// The text sent.
    pub fn as_str(&self) -> &str {
        match self {
            HeaderValue::Plain(s) => s,
            HeaderValue::Secret(s) => s.expose(),
        }
    }
}

/// What a placeholder stands for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Field {
    Text,
    Id,
    Lang,
    Depth,
}

/// One piece of a filled-in string.
#[derive(Debug, Clone, PartialEq, Eq)]
enum Piece {
    Literal(String),
    Slot(Field),
}

/// Where a pattern is used, which decides its escape.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Context {
    Url,
    Json,
}

impl Context {
    fn escape(self) -> &'static str {
        match self {
            Context::Url => "url",
            Context::Json => "json",
        }
    }
}

/// A string with placeholders, escaped for one context.
#[derive(Debug, Clone, PartialEq, Eq)]
struct Pattern {
    context: Context,
    pieces: Vec<Piece>,
}

/// A JSON Pointer (RFC 6901) to a list, with one `*` step: the part before
/// it must lead to an array, the part after it (possibly empty) is applied
/// to each element to reach the hit.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct HitsPointer {
    /// The pointer as written.
    pub written: String,
    /// Pointer to the array.
    pub list: String,
    /// Pointer from an element to the hit.
    pub each: String,
}

/// Where the ranking sits in a response.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ResponsePaths {
    /// The hit list, in rank order.
    pub hits: HitsPointer,
    /// A hit's post id (string or integer), relative to the hit.
    pub id: String,
    /// A hit's score (a number), relative to the hit.
    pub score: String,
}

/// A checked request template.
#[derive(Debug, Clone)]
pub struct Template {
    /// The file it was read from (for messages).
    pub path: PathBuf,
    /// SHA-256 of the file's bytes (a resumed fetch must use the same one).
    pub sha256: String,
    /// The request method.
    pub method: Method,
    url: Pattern,
    body: Option<Pattern>,
    /// Headers in file order (names as written).
    pub headers: Vec<(String, HeaderValue)>,
    /// Where the ranking is in a response.
    pub response: ResponsePaths,
}

/// A request filled in for one query.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FilledRequest {
    /// The URL.
    pub url: String,
    /// The JSON body, for POST.
    pub body: Option<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTemplate {
    #[serde(default = "default_method")]
    method: Method,
    url: toml::Spanned<String>,
    body: Option<toml::Spanned<String>>,
    #[serde(default)]
    headers: BTreeMap<String, toml::Spanned<RawHeader>>,
    response: RawResponse,
}

fn default_method() -> Method {
    Method::Get
}

#[derive(Deserialize)]
#[serde(untagged)]
enum RawHeader {
    Plain(String),
    Env(RawEnvHeader),
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawEnvHeader {
    env: String,
    #[serde(default)]
    prefix: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawResponse {
    hits: toml::Spanned<String>,
    id: toml::Spanned<String>,
    score: toml::Spanned<String>,
}

/// Read and check a template file; secrets are read from the environment
/// through `env` (the process environment in the CLI).
pub fn read_template(path: &Path, env: &dyn Fn(&str) -> Option<String>) -> Result<Template> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    let text = std::str::from_utf8(&bytes)
        .map_err(|e| Error::in_file(path, crate::input::utf8_message(e, "the file")))?;
    parse_template(path, text, &crate::input::sha256_hex(&bytes), env)
}

/// 1-based line of a byte offset.
fn line_of(text: &str, offset: usize) -> u64 {
    let end = offset.min(text.len());
    text.as_bytes().get(..end).map_or(0, |b| b.iter().filter(|&&c| c == b'\n').count()) as u64 + 1
}

fn parse_template(
    path: &Path,
    text: &str,
    sha256: &str,
    env: &dyn Fn(&str) -> Option<String>,
) -> Result<Template> {
    let at = |span: std::ops::Range<usize>, message: String| {
        Error::at_line(path, line_of(text, span.start), message)
    };
    let raw: RawTemplate = toml::from_str(text).map_err(|e| {
        let line = e.span().map_or(1, |s| line_of(text, s.start));
        let message = e.message().split_whitespace().collect::<Vec<_>>().join(" ");
        Error::at_line(path, line, message)
    })?;
    let url = parse_pattern(raw.url.get_ref(), Context::Url)
        .map_err(|m| at(raw.url.span(), format!("url: {m}")))?;
    let scheme_ok = ["http://", "https://"]
        .iter()
        .any(|s| raw.url.get_ref().get(..s.len()).is_some_and(|p| p.eq_ignore_ascii_case(s)));
    if !scheme_ok {
        return Err(at(
            raw.url.span(),
            format!(
                "url: expected an address starting with http:// or https://, found {:?}",
                raw.url.get_ref()
            ),
        ));
    }
    let body = match (&raw.body, raw.method) {
        (Some(body), Method::Get) => {
            return Err(at(
                body.span(),
                "body: a GET request has no body; write method = \"POST\"".into(),
            ))
        }
        (None, Method::Post) => {
            return Err(Error::in_file(path, "method POST: expected a `body` (JSON text)"))
        }
        (Some(body), Method::Post) => {
            let pattern = parse_pattern(body.get_ref(), Context::Json)
                .map_err(|m| at(body.span(), format!("body: {m}")))?;
            let sample = fill(&pattern, &sample_query(), 10);
            if let Err(e) = serde_json::from_str::<serde_json::Value>(&sample) {
                return Err(at(
                    body.span(),
                    format!("body: expected JSON once the placeholders are filled, found {e} in {sample:?}"),
                ));
            }
            Some(pattern)
        }
        (None, Method::Get) => None,
    };
    let mut headers = Vec::new();
    for (name, value) in &raw.headers {
        let valid_name = !name.is_empty()
            && name.bytes().all(|b| b.is_ascii_alphanumeric() || b"!#$%&'*+-.^_`|~".contains(&b));
        if !valid_name {
            return Err(at(value.span(), format!("headers: {name:?} is not a valid header name")));
        }
        let value = match value.get_ref() {
            RawHeader::Plain(v) => HeaderValue::Plain(v.clone()),
            RawHeader::Env(RawEnvHeader { env: var, prefix }) => match env(var) {
                Some(secret) => HeaderValue::Secret(Secret(format!("{prefix}{secret}"))),
                None => {
                    return Err(at(
                        value.span(),
                        format!("headers: {name}: the environment variable {var:?} is not set"),
                    ))
                }
            },
        };
        if value.as_str().bytes().any(|b| b == b'\r' || b == b'\n') {
            return Err(at(
                raw.headers.get(name).map_or(0..0, toml::Spanned::span),
                format!("headers: the value of {name} holds a line break"),
            ));
        }
        headers.push((name.clone(), value));
    }
    let response = &raw.response;
    let hits = parse_hits(response.hits.get_ref())
        .map_err(|m| at(response.hits.span(), format!("response.hits: {m}")))?;
    let id = parse_plain_pointer(response.id.get_ref())
        .map_err(|m| at(response.id.span(), format!("response.id: {m}")))?;
    let score = parse_plain_pointer(response.score.get_ref())
        .map_err(|m| at(response.score.span(), format!("response.score: {m}")))?;
    Ok(Template {
        path: path.to_path_buf(),
        sha256: sha256.to_string(),
        method: raw.method,
        url,
        body,
        headers,
        response: ResponsePaths { hits, id, score },
    })
}

/// A query used to check that a body is JSON once filled.
fn sample_query() -> Query {
    Query { id: "q\"1".into(), text: "a \"b\" & c".into(), lang: None, tags: Vec::new() }
}

const FIELDS: [(&str, Field); 4] =
    [("text", Field::Text), ("id", Field::Id), ("lang", Field::Lang), ("depth", Field::Depth)];

/// Split `raw` into literal text and placeholders for `context`.
fn parse_pattern(raw: &str, context: Context) -> std::result::Result<Pattern, String> {
    let mut pieces = Vec::new();
    let mut literal = String::new();
    let mut rest = raw;
    while let Some(open) = rest.find('{') {
        let (before, from_brace) = rest.split_at(open);
        literal.push_str(before);
        match placeholder_at(from_brace) {
            Some((name, escape, len)) => {
                let field =
                    FIELDS.iter().find(|(n, _)| *n == name).map(|(_, f)| *f).ok_or_else(|| {
                        format!(
                            "unknown placeholder {{{name}}}: expected {{text:…}}, {{id:…}}, \
                             {{lang:…}} or {{depth}}"
                        )
                    })?;
                check_escape(field, name, escape, context)?;
                if !literal.is_empty() {
                    pieces.push(Piece::Literal(std::mem::take(&mut literal)));
                }
                pieces.push(Piece::Slot(field));
                rest = from_brace.get(len..).unwrap_or("");
            }
            None => {
                literal.push('{');
                rest = from_brace.get(1..).unwrap_or("");
            }
        }
    }
    literal.push_str(rest);
    if !literal.is_empty() {
        pieces.push(Piece::Literal(literal));
    }
    Ok(Pattern { context, pieces })
}

/// `{name}` or `{name:escape}` (lowercase ASCII letters) at the start of
/// `s`: the name, the escape and the length in bytes.
fn placeholder_at(s: &str) -> Option<(&str, Option<&str>, usize)> {
    let close = s.find('}')?;
    let inner = s.get(1..close)?;
    let (name, escape) = match inner.split_once(':') {
        Some((n, e)) => (n, Some(e)),
        None => (inner, None),
    };
    let word = |w: &str| !w.is_empty() && w.bytes().all(|b| b.is_ascii_lowercase() || b == b'_');
    (word(name) && escape.is_none_or(word)).then_some((name, escape, close + 1))
}

fn check_escape(
    field: Field,
    name: &str,
    escape: Option<&str>,
    context: Context,
) -> std::result::Result<(), String> {
    let wanted = context.escape();
    match (field, escape) {
        (Field::Depth, None) => Ok(()),
        (Field::Depth, Some(e)) => {
            Err(format!("{{depth:{e}}}: the depth is a number, write {{depth}}"))
        }
        (_, Some(e)) if e == wanted => Ok(()),
        (_, None) => Err(format!("{{{name}}}: say how to escape it here, {{{name}:{wanted}}}")),
        (_, Some(e)) => Err(format!(
            "{{{name}:{e}}}: expected {{{name}:{wanted}}} in the {}",
            if context == Context::Url { "url" } else { "body" }
        )),
    }
}

fn fill(pattern: &Pattern, query: &Query, depth: usize) -> String {
    let mut out = String::new();
    for piece in &pattern.pieces {
        match piece {
            Piece::Literal(s) => out.push_str(s),
            Piece::Slot(Field::Depth) => out.push_str(&depth.to_string()),
            Piece::Slot(field) => {
                let value = match field {
                    Field::Text => Some(query.text.as_str()),
                    Field::Id => Some(query.id.as_str()),
                    _ => query.lang.as_ref().map(|l| l.as_str()),
                };
                match (pattern.context, value) {
                    (Context::Url, Some(v)) => out.push_str(&percent_encode(v)),
                    (Context::Url, None) => {}
                    (Context::Json, Some(v)) => out.push_str(&json_string(v)),
                    (Context::Json, None) => out.push_str("null"),
                }
            }
        }
    }
    out
}

impl Template {
    /// The URL and body for one query at one depth.
    pub fn fill(&self, query: &Query, depth: usize) -> FilledRequest {
        FilledRequest {
            url: fill(&self.url, query, depth),
            body: self.body.as_ref().map(|b| fill(b, query, depth)),
        }
    }
}

/// Percent-encode every UTF-8 byte but RFC 3986's unreserved characters.
pub fn percent_encode(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for b in s.bytes() {
        if b.is_ascii_alphanumeric() || matches!(b, b'-' | b'.' | b'_' | b'~') {
            out.push(char::from(b));
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

/// A JSON string literal (quotes included) for `s`.
fn json_string(s: &str) -> String {
    serde_json::Value::String(s.to_string()).to_string()
}

/// Check one RFC 6901 pointer: empty, or `/`-prefixed steps whose `~` is
/// followed by `0` or `1`.
fn check_pointer(p: &str) -> std::result::Result<(), String> {
    if !(p.is_empty() || p.starts_with('/')) {
        return Err(format!("expected a JSON Pointer (empty or starting with '/'), found {p:?}"));
    }
    let mut chars = p.chars();
    while let Some(c) = chars.next() {
        if c == '~' && !matches!(chars.next(), Some('0' | '1')) {
            return Err(format!("in {p:?}: '~' must be followed by 0 or 1 (RFC 6901 §3)"));
        }
    }
    Ok(())
}

fn parse_plain_pointer(p: &str) -> std::result::Result<String, String> {
    check_pointer(p)?;
    if p.split('/').any(|step| step == "*") {
        return Err(format!("{p:?}: only `hits` may have a `*` step"));
    }
    Ok(p.to_string())
}

fn parse_hits(p: &str) -> std::result::Result<HitsPointer, String> {
    check_pointer(p)?;
    let steps: Vec<&str> = p.split('/').collect();
    let stars: Vec<usize> =
        steps.iter().enumerate().filter(|(_, s)| **s == "*").map(|(i, _)| i).collect();
    let [star] = stars.as_slice() else {
        return Err(format!(
            "expected one `*` step for the list of hits (e.g. \"/ranking/*\"), found {} in {p:?}",
            stars.len()
        ));
    };
    let list = steps.get(..*star).map(|s| s.join("/")).unwrap_or_default();
    let each = steps.get(star + 1..).filter(|s| !s.is_empty()).map(|s| format!("/{}", s.join("/")));
    Ok(HitsPointer { written: p.to_string(), list, each: each.unwrap_or_default() })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn no_env(_: &str) -> Option<String> {
        None
    }

    fn parse(text: &str) -> Result<Template> {
        parse_template(Path::new("t.toml"), text, "0", &|v| {
            (v == "KEY").then(|| "s3cret".to_string())
        })
    }

    fn query(text: &str, lang: Option<&str>) -> Query {
        Query {
            id: "q 1&".into(),
            text: text.into(),
            lang: lang.map(|l| crate::input::LangCode::parse(l).expect("code")),
            tags: Vec::new(),
        }
    }

    const GET: &str = "url = \"http://h/s?q={text:url}&id={id:url}&l={lang:url}&n={depth}\"\n\
        [response]\nhits = \"/r/*\"\nid = \"/p\"\nscore = \"/s\"\n";

    #[test]
    fn url_escape_follows_rfc_3986_unreserved_set() {
        // RFC 3986 §2.3 unreserved characters stay; every other UTF-8 byte is
        // %XX in upper case (§2.1). Bytes: é = C3 A9, 😀 = F0 9F 98 80 (UTF-8
        // of U+00E9 and U+1F600, RFC 3629).
        let t = parse(GET).expect("valid");
        let filled = t.fill(&query("a \"b\" & #c é 😀 ~-._+/", Some("fr")), 7);
        assert_eq!(
            filled.url,
            "http://h/s?q=a%20%22b%22%20%26%20%23c%20%C3%A9%20%F0%9F%98%80%20~-._%2B%2F\
             &id=q%201%26&l=fr&n=7"
        );
        assert_eq!(filled.body, None);
        assert_eq!(t.fill(&query("x", None), 1).url, "http://h/s?q=x&id=q%201%26&l=&n=1");
    }

    #[test]
    fn json_escape_gives_a_string_literal_or_null() {
        let t = parse(
            "method = \"POST\"\nurl = \"https://h/s\"\n\
             body = '{\"q\": {text:json}, \"l\": {lang:json}, \"n\": {depth}, \"o\": {\"a\": 1}}'\n\
             [response]\nhits = \"/r/*/doc\"\nid = \"/p\"\nscore = \"/s\"\n",
        )
        .expect("valid");
        let filled = t.fill(&query("say \"hi\"\\ é 😀\n", None), 3);
        // RFC 8259 §7: quote and backslash escaped, control characters
        // escaped, other characters may stay as they are.
        assert_eq!(
            filled.body.as_deref(),
            Some(
                "{\"q\": \"say \\\"hi\\\"\\\\ é 😀\\n\", \"l\": null, \"n\": 3, \"o\": {\"a\": 1}}"
            )
        );
        assert_eq!(t.response.hits.list, "/r");
        assert_eq!(t.response.hits.each, "/doc");
    }

    #[test]
    fn placeholder_mistakes_are_errors_naming_the_line() {
        let cases = [
            (
                "url = \"http://h/{text}\"",
                "t.toml:1: url: {text}: say how to escape it here, {text:url}",
            ),
            (
                "url = \"http://h/{text:json}\"",
                "t.toml:1: url: {text:json}: expected {text:url} in the url",
            ),
            ("url = \"http://h/{txt:url}\"", "t.toml:1: url: unknown placeholder {txt}"),
            ("url = \"http://h/{depth:url}\"", "{depth:url}: the depth is a number, write {depth}"),
            ("url = \"ftp://h/\"", "expected an address starting with http:// or https://"),
        ];
        for (url, expected) in cases {
            let text = format!("{url}\n[response]\nhits = \"/r/*\"\nid = \"/p\"\nscore = \"/s\"\n");
            let err = parse(&text).expect_err("refused").to_string();
            assert!(err.contains(expected), "{err}");
        }
    }

    #[test]
    fn body_must_be_json_and_only_with_post() {
        let resp = "[response]\nhits = \"/r/*\"\nid = \"/p\"\nscore = \"/s\"\n";
        let bad = format!(
            "method = \"POST\"\nurl = \"http://h\"\nbody = '{{\"q\": \"{{text:json}}\"}}'\n{resp}"
        );
        let err = parse(&bad).expect_err("quoted placeholder is not JSON").to_string();
        assert!(
            err.contains("t.toml:3: body: expected JSON once the placeholders are filled"),
            "{err}"
        );
        let get_body = format!("url = \"http://h\"\nbody = '{{}}'\n{resp}");
        let err = parse(&get_body).expect_err("GET with body").to_string();
        assert!(err.contains("t.toml:2: body: a GET request has no body"), "{err}");
    }

    #[test]
    fn hits_pointer_needs_exactly_one_star() {
        for (hits, expected) in [
            ("/r", "found 0"),
            ("/*/x/*", "found 2"),
            ("r/*", "expected a JSON Pointer"),
            ("/a~2/*", "'~' must be followed by 0 or 1"),
        ] {
            let text = format!(
                "url = \"http://h\"\n[response]\nhits = \"{hits}\"\nid = \"/p\"\nscore = \"/s\"\n"
            );
            let err = parse(&text).expect_err("refused").to_string();
            assert!(err.contains("t.toml:3: response.hits: ") && err.contains(expected), "{err}");
        }
        let t = parse(GET).expect("valid");
        assert_eq!((t.response.hits.list.as_str(), t.response.hits.each.as_str()), ("/r", ""));
    }

    #[test]
    fn secret_header_comes_from_the_environment_and_is_never_shown() {
        let text = "url = \"http://h\"\n[headers]\nX-Key = { env = \"KEY\", prefix = \"Bearer \" }\n\
                    Accept = \"application/json\"\n[response]\nhits = \"/r/*\"\nid = \"/p\"\nscore = \"/s\"\n";
        let t = parse(text).expect("valid");
        let key = t.headers.iter().find(|(n, _)| n == "X-Key").map(|(_, v)| v.as_str());
        assert_eq!(key, Some("Bearer s3cret"));
        assert!(!format!("{t:?}").contains("s3cret"));
        let err =
            parse_template(Path::new("t.toml"), text, "0", &no_env).expect_err("unset").to_string();
        assert!(
            err.contains("t.toml:3: headers: X-Key: the environment variable \"KEY\" is not set"),
            "{err}"
        );
    }

    #[test]
    fn unknown_keys_are_refused() {
        let err = parse(&format!("timeout = 3\n{GET}")).expect_err("unknown key").to_string();
        assert!(err.contains("t.toml:1: unknown field `timeout`"), "{err}");
    }
}
