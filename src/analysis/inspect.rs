//! Inspection of chains for the `tokens` command: the tokens a chain makes
//! of a text, and a trace of the token stream after the tokenizer and after
//! each step (built by running ever longer prefixes of the chain).
//!
//! Place in the data flow: `analysis` stage, used only by the CLI to show a
//! person what a chain does; nothing downstream reads it. Everything here
//! serializes (serde) for a JSON output.

use serde::Serialize;
use tantivy::tokenizer::Token;

use super::chain::{build_prefix, AnalysisContext, Analyzer};
use super::spec::{ChainBody, ChainSpec, Pipeline};
use crate::error::Result;
use crate::input::LangCode;

/// One token as shown to a person. In JSON its keys are our own words, as
/// in the text view (`token`, `at`, and the byte range `start`..`end`).
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct TokenView {
    /// The token's text after the chain (JSON `token`).
    #[serde(rename = "token")]
    pub text: String,
    /// Its position (tokens at the same position are alternatives; JSON `at`).
    #[serde(rename = "at")]
    pub position: usize,
    /// Byte offset of its first byte in the original text (JSON `start`).
    #[serde(rename = "start")]
    pub offset_from: usize,
    /// Byte offset just past its last byte in the original text (JSON `end`).
    #[serde(rename = "end")]
    pub offset_to: usize,
}

impl From<&Token> for TokenView {
    fn from(t: &Token) -> TokenView {
        TokenView {
            text: t.text.clone(),
            position: t.position,
            offset_from: t.offset_from,
            offset_to: t.offset_to,
        }
    }
}

/// The token stream after one stage of a chain.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct TraceStage {
    /// The field whose chain is traced (`text`, `text_de`, `text_other`).
    pub field: String,
    /// The stage: the tokenizer's name, then each step's label
    /// (`stem(de, current)`).
    pub stage: String,
    /// The tokens after the stage.
    pub tokens: Vec<TokenView>,
}

/// The field a text goes to: a routed chain routes it as a post with the
/// given declared language, detecting its language first (as the
/// orchestrator does for every post).
fn field_of(analyzer: &Analyzer, text: &str, lang: Option<LangCode>) -> usize {
    let detection = analyzer.detector().and_then(|d| d.detect(text));
    analyzer.field_for_post(lang, detection.as_ref())
}

/// The tokens `analyzer` makes of `text`, routed as a post (see
/// [`Analyzer::field_for_post`]) for a routed chain.
pub fn tokenize(analyzer: &Analyzer, text: &str, lang: Option<LangCode>) -> Vec<TokenView> {
    let field = field_of(analyzer, text, lang);
    let Some(field) = analyzer.fields().get(field) else { return Vec::new() };
    let mut text_analyzer = field.analyzer.clone();
    let mut tokens = Vec::new();
    text_analyzer.token_stream(text).process(&mut |t: &Token| tokens.push(TokenView::from(t)));
    tokens
}

/// The token stream of `text` after the tokenizer and after each step of
/// the chain of `spec` (for a routed chain: of the field `text` is routed
/// to, as a post with declared language `lang`).
pub fn trace(
    spec: &ChainSpec,
    ctx: &AnalysisContext,
    text: &str,
    lang: Option<LangCode>,
) -> Result<Vec<TraceStage>> {
    let (key, pipeline): (String, &Pipeline) = match &spec.body {
        ChainBody::Plain(pipeline) => (super::chain::PLAIN_FIELD.to_string(), pipeline),
        ChainBody::Routed { route } => {
            let analyzer = Analyzer::build(spec, ctx)?;
            let field = field_of(&analyzer, text, lang);
            let pipeline = route.branches.get(field).map_or(&route.fallback, |b| &b.pipeline);
            let key = analyzer.fields().get(field).map(|f| f.key.clone()).unwrap_or_default();
            (key, pipeline)
        }
    };
    let mut stages = Vec::with_capacity(pipeline.steps.len() + 1);
    for k in 0..=pipeline.steps.len() {
        let mut analyzer = build_prefix(pipeline, k, ctx)?;
        let mut tokens = Vec::new();
        analyzer.token_stream(text).process(&mut |t: &Token| tokens.push(TokenView::from(t)));
        let stage = match k.checked_sub(1).and_then(|i| pipeline.steps.get(i)) {
            Some(step) => step.label(),
            None => pipeline.tokenizer_label(),
        };
        stages.push(TraceStage { field: key.clone(), stage, tokens });
    }
    Ok(stages)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::spec::{builtin_chains, parse_chains};

    fn lang(code: &str) -> LangCode {
        LangCode::parse(code).expect("code")
    }

    fn spec(name: &str) -> ChainSpec {
        let chains = builtin_chains(lang("en")).expect("built-ins");
        chains.into_iter().find(|c| c.name.as_str() == name).expect("known chain")
    }

    fn one(toml_steps: &str, tokenizer: &str) -> ChainSpec {
        let text = format!(
            "[[chain]]\nname = \"t\"\ntokenizer = \"{tokenizer}\"\nsteps = [{toml_steps}]\n"
        );
        parse_chains(&text, "t.toml", &[]).expect("valid").remove(0)
    }

    /// Token texts per stage, as `stage: a b c`.
    fn trace_texts(spec: &ChainSpec, text: &str, lang: Option<LangCode>) -> Vec<String> {
        trace(spec, &AnalysisContext::default(), text, lang)
            .expect("traces")
            .into_iter()
            .map(|s| {
                let tokens: Vec<String> = s.tokens.into_iter().map(|t| t.text).collect();
                format!("{} {}: {}", s.field, s.stage, tokens.join(" "))
            })
            .collect()
    }

    #[test]
    fn tokenize_reports_text_positions_offsets() {
        let a = Analyzer::build(&spec("stemmed"), &AnalysisContext::default()).expect("builds");
        assert_eq!(
            tokenize(&a, "Running ponies", None),
            [
                TokenView { text: "run".into(), position: 0, offset_from: 0, offset_to: 7 },
                TokenView { text: "poni".into(), position: 1, offset_from: 8, offset_to: 14 },
            ]
        );
        let json = serde_json::to_string(&tokenize(&a, "Dogs", None)).expect("serializes");
        assert_eq!(json, r#"[{"token":"dog","at":0,"start":0,"end":4}]"#);
    }

    #[test]
    fn code_switched_post_follows_its_declared_language() {
        // German post with English words: the German stemmer sees every word.
        assert_eq!(
            trace_texts(
                &spec("routed"),
                "Heute ist das Wetter perfect für walking 🌊",
                Some(lang("de"))
            ),
            [
                "text_de words: Heute ist das Wetter perfect für walking",
                "text_de lowercase: heute ist das wetter perfect für walking",
                "text_de stem(de, current): heut ist das wett perfect fur walking",
            ]
        );
        // Declared English: the English stemmer.
        assert_eq!(
            trace_texts(&spec("routed"), "walking für Häuser", Some(lang("en")))
                .last()
                .map(String::as_str),
            Some("text_en stem(en, current): walk für häuser")
        );
    }

    #[test]
    fn german_compounds_stay_whole() {
        // UAX #29 has no compound splitting; Snowball German strips the
        // inflection only.
        let chain = one(r#"{ step = "lowercase" }, { step = "stem", language = "de" }"#, "words");
        assert_eq!(
            trace_texts(&chain, "Donaudampfschifffahrtsgesellschaften Kindergärten", None),
            [
                "text words: Donaudampfschifffahrtsgesellschaften Kindergärten",
                "text lowercase: donaudampfschifffahrtsgesellschaften kindergärten",
                "text stem(de, current): donaudampfschifffahrtsgesellschaft kindergart",
            ]
        );
    }

    #[test]
    fn french_elided_articles_then_stem() {
        let chain = one(
            r#"{ step = "strip_elided", language = "fr" }, { step = "lowercase" }, { step = "stem", language = "fr" }"#,
            "words",
        );
        assert_eq!(
            trace_texts(&chain, "L'amitié qu’il préfère", None),
            [
                "text words: L'amitié qu’il préfère",
                "text strip_elided(fr): amitié il préfère",
                "text lowercase: amitié il préfère",
                "text stem(fr, current): amiti il préfer",
            ]
        );
    }

    #[test]
    fn turkish_dotted_and_dotless_i() {
        let default = one(r#"{ step = "lowercase" }"#, "words");
        let turkish = one(r#"{ step = "lowercase", language = "tr" }"#, "words");
        let text = "İstanbul IĞDIR";
        assert_eq!(trace_texts(&default, text, None)[1], "text lowercase: i\u{307}stanbul iğdir");
        assert_eq!(trace_texts(&turkish, text, None)[1], "text lowercase(tr): istanbul ığdır");
    }

    #[test]
    fn greek_final_sigma_and_accents() {
        let chain = one(r#"{ step = "lowercase" }, { step = "fold" }"#, "words");
        assert_eq!(
            trace_texts(&chain, "ΟΔΥΣΣΕΑΣ Ελλάς", None),
            [
                "text words: ΟΔΥΣΣΕΑΣ Ελλάς",
                "text lowercase: οδυσσεας ελλάς",
                "text fold: οδυσσεας ελλας",
            ]
        );
    }

    #[test]
    fn cjk_and_arabic() {
        // UAX #29: ideographs and hiragana break between every character;
        // katakana runs stay together (WB13).
        let chain = one(r#"{ step = "lowercase" }"#, "words");
        assert_eq!(
            trace_texts(&chain, "東京タワーに行った", None)[0],
            "text words: 東 京 タワー に 行 っ た"
        );
        assert_eq!(trace_texts(&chain, "السلام عليكم!", None)[0], "text words: السلام عليكم");
    }

    #[test]
    fn emoji_zwj_family_through_the_hashtag_chain() {
        let family = "\u{1F468}\u{200D}\u{1F469}\u{200D}\u{1F467}\u{200D}\u{1F466}";
        let stages = trace(
            &spec("hashtag"),
            &AnalysisContext::default(),
            &format!("Family day {family} #SundayFunday www.park.example"),
            None,
        )
        .expect("traces");
        let texts: Vec<Vec<&str>> =
            stages.iter().map(|s| s.tokens.iter().map(|t| t.text.as_str()).collect()).collect();
        assert_eq!(texts[0], ["Family", "day", family, "#SundayFunday", "www.park.example"]);
        assert_eq!(texts[1], ["Family", "day", family, "#SundayFunday"]);
        assert_eq!(texts[3], ["family", "day", family, "sundayfunday", "sunday", "funday"]);
        let labels: Vec<&str> = stages.iter().map(|s| s.stage.as_str()).collect();
        assert_eq!(labels, ["posts", "drop(urls)", "hashtags", "lowercase"]);
        // The family keeps its byte range (25 bytes: four 4-byte emoji, three ZWJ).
        let f = &stages[3].tokens[2];
        assert_eq!((f.offset_from, f.offset_to, f.position), (11, 36, 2));
    }

    #[test]
    fn routed_trace_without_language_detects() {
        let stages = trace(
            &spec("routed"),
            &AnalysisContext::default(),
            "Les enfants jouent dans le jardin avec leurs amis",
            None,
        )
        .expect("traces");
        assert_eq!(stages[0].field, "text_fr");
        assert_eq!(stages.len(), 3);
        // Nothing to detect (lingua, the built-in detector, even answers
        // "ok": Dutch, measured).
        let undetectable =
            trace(&spec("routed"), &AnalysisContext::default(), "12:30 🎉", None).expect("traces");
        assert_eq!(undetectable[0].field, "text_other");
    }
}
