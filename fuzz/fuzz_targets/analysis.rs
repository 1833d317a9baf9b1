//! Fuzz the analysis of arbitrary text through every built-in chain (and
//! the chains of the repository's example chain files, for the steps the
//! built-ins do not use), each field's analyzer in turn, with and without
//! corpus word frequencies: no panic, every token's offsets inside the
//! text and on char boundaries, positions non-decreasing. A routed chain
//! also detects the text's language.
#![no_main]
use std::sync::{Arc, OnceLock};

use libfuzzer_sys::fuzz_target;
use postassay::analysis::hashtag::WordFreqs;
use postassay::analysis::{builtin_chains, parse_chains, AnalysisContext, Analyzer, ChainSpec};
use postassay::input::LangCode;

/// Chain files of the repository, beside the built-ins.
const CHAIN_FILES: [(&str, &str); 4] = [
    ("example.toml", include_str!("../../chains/example.toml")),
    ("all_languages.toml", include_str!("../../chains/all_languages.toml")),
    ("hashtag_lists.toml", include_str!("../../chains/hashtag_lists.toml")),
    ("unspaced.toml", include_str!("../../chains/unspaced.toml")),
];

fn analyzers() -> &'static [Analyzer] {
    static ALL: OnceLock<Vec<Analyzer>> = OnceLock::new();
    ALL.get_or_init(|| {
        let builtins = builtin_chains(LangCode::parse("en").expect("en")).expect("built-ins");
        let mut specs: Vec<ChainSpec> = builtins.clone();
        for (name, text) in CHAIN_FILES {
            specs.extend(parse_chains(text, name, &builtins).expect("repository chain file"));
        }
        let freqs = WordFreqs::learn(["the harbour market opens", "fish market news today"]);
        let contexts =
            [AnalysisContext::default(), AnalysisContext { word_freqs: Some(Arc::new(freqs)) }];
        let mut all = Vec::new();
        for ctx in &contexts {
            for spec in &specs {
                all.push(Analyzer::build(spec, ctx).expect("building a repository chain"));
            }
        }
        all
    })
}

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    for analyzer in analyzers() {
        if let Some(detector) = analyzer.detector() {
            if let Some(d) = detector.detect(text) {
                assert!((0.0..=1.0).contains(&d.confidence), "confidence {}", d.confidence);
            }
        }
        for field in analyzer.fields() {
            let mut a = field.analyzer.clone();
            let mut stream = a.token_stream(text);
            let mut last_position = 0usize;
            let mut first = true;
            while stream.advance() {
                let t = stream.token();
                let name = analyzer.name().as_str();
                assert!(
                    t.offset_from <= t.offset_to && t.offset_to <= text.len(),
                    "chain {name} field {}: offsets {}..{} outside a text of {} bytes",
                    field.key,
                    t.offset_from,
                    t.offset_to,
                    text.len()
                );
                assert!(
                    text.is_char_boundary(t.offset_from) && text.is_char_boundary(t.offset_to),
                    "chain {name} field {}: offsets {}..{} not on char boundaries",
                    field.key,
                    t.offset_from,
                    t.offset_to
                );
                assert!(
                    first || t.position >= last_position,
                    "chain {name} field {}: position {} after {}",
                    field.key,
                    t.position,
                    last_position
                );
                first = false;
                last_position = t.position;
            }
        }
    }
});
