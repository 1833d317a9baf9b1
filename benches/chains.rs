//! Speed benchmark of the built-in analysis chains (issue 3, "Benchmarks").
//!
//! Not part of the data flow: a stand-alone program that generates a
//! deterministic corpus of short multilingual posts and measures, in one
//! run on the same posts,
//! - analysis throughput (tokens/s, one thread) of every built-in chain
//!   against a bare UAX #29 split + lowercase and against tantivy's
//!   `default` tokenizer (`SimpleTokenizer` + `RemoveLongFilter(40)` +
//!   `LowerCaser`);
//! - index build time of every chain (`ChainIndex::build`, as `postassay
//!   run` builds it) against an index of the same posts with tantivy's
//!   `default` tokenizer and the same schema and writer settings;
//! - language detection for the `routed` chain, cold (detected on 2
//!   threads and written to an empty cache) and warm (read back from the
//!   cache), added to the routed build;
//! - the `words` tokenizer's `unspaced` settings on the Thai, Chinese and
//!   Japanese sentences of the shared open data (`ud_nospace/`, from
//!   `POSTASSAY_BENCH_DATA`, default `../shared/data`), against
//!   `characters`; skipped with a note when the data is absent.
//!
//! Machines are noisy, so the figures to keep are the ratios to the default
//! build measured in the same run: each chain's build follows its own
//! default build, in several rounds, and the table shows the median ratio
//! and its range. The analysis table also prints a digest of every token, to
//! check that an optimisation changed no output.
//!
//! Run: `cargo bench --bench chains` (200 000 posts). Environment:
//! `POSTASSAY_BENCH_POSTS=N` (posts; the reference figures use 1 000 000),
//! `POSTASSAY_BENCH_REPEATS=N` (build rounds, default 3),
//! `POSTASSAY_BENCH_PROFILE=NAME` (only analyse with one chain, `default`
//! for tantivy's, or only detect with `detect`, for a profiler),
//! `POSTASSAY_BENCH_DETECTOR=whatlang|lingua` (the routed chain's detector;
//! default the built-in's). DEVELOPERS.md
//! ("Benchmarks") explains how to read the output.

mod common;
use common::{env_usize, median};
#[path = "common/corpus.rs"]
mod corpus;
use corpus::generate_posts;

use std::hint::black_box;
use std::sync::Arc;
use std::time::Instant;

use postassay::analysis::detect::{Detection, DetectorKind, LangDetector};
use postassay::analysis::hashtag::WordFreqs;
use postassay::analysis::{
    builtin_chains, AnalysisContext, Analyzer, ChainBody, Unspaced, WordTokenizer,
};
use postassay::bench::detect_cache::DetectCache;
use postassay::index::ChainIndex;
use postassay::input::{LangCode, Post};
use sha2::{Digest, Sha256};
use tantivy::tokenizer::{
    LowerCaser, RemoveLongFilter, SimpleTokenizer, TextAnalyzer, TokenStream,
};
use unicode_segmentation::UnicodeSegmentation;

/// Posts generated when `POSTASSAY_BENCH_POSTS` is not set.
const DEFAULT_POSTS: usize = 200_000;

/// Build repeats when `POSTASSAY_BENCH_REPEATS` is not set.
const DEFAULT_REPEATS: usize = 3;

fn main() {
    let posts_wanted = env_usize("POSTASSAY_BENCH_POSTS", DEFAULT_POSTS);
    let repeats = env_usize("POSTASSAY_BENCH_REPEATS", DEFAULT_REPEATS).max(1);

    let started = Instant::now();
    let posts = generate_posts(posts_wanted);
    let generated = started.elapsed().as_secs_f64();
    let bytes: usize = posts.iter().map(|p| p.text.len()).sum();
    let ascii = posts.iter().filter(|p| p.text.is_ascii()).count();
    println!(
        "postassay chain benchmark: {} posts, {:.1} MB (mean {:.0} bytes, {:.0}% pure ASCII), \
         generated in {:.2} s",
        posts.len(),
        bytes as f64 / 1e6,
        bytes as f64 / posts.len().max(1) as f64,
        100.0 * ascii as f64 / posts.len().max(1) as f64,
        generated
    );
    println!("indexing: one thread, no merging (as `postassay run`); builds: best of {repeats}");
    for p in posts.iter().step_by(posts.len().div_ceil(4).max(1)) {
        println!("  sample: {}", p.text);
    }

    let en = LangCode::parse("en").expect("en is a valid code");
    let mut chains = builtin_chains(en).expect("the built-in chains parse");
    // The routed chain's detector: the built-in's, or the one named.
    if let Ok(name) = std::env::var("POSTASSAY_BENCH_DETECTOR") {
        let kind = DetectorKind::ALL
            .into_iter()
            .find(|k| k.as_str() == name)
            .expect("POSTASSAY_BENCH_DETECTOR is whatlang or lingua");
        for chain in &mut chains {
            if let ChainBody::Routed { route } = &mut chain.body {
                route.detector = kind;
            }
        }
    }
    let learn_started = Instant::now();
    let freqs = WordFreqs::learn(posts.iter().map(|p| p.text.as_str()));
    let learn_seconds = learn_started.elapsed().as_secs_f64();
    println!(
        "hashtag word table learned from the corpus in {learn_seconds:.2} s ({} words; \
         once per run; added to the hashtag build in the row `hashtag + word table`)",
        freqs.len()
    );
    let ctx = AnalysisContext { word_freqs: Some(Arc::new(freqs)) };
    let analyzers: Vec<Analyzer> =
        chains.iter().map(|c| Analyzer::build(c, &ctx).expect("built-in chains build")).collect();
    let routed = analyzers
        .iter()
        .find(|a| a.detector().is_some())
        .expect("the built-ins have a routed chain");
    let detector = routed.detector().expect("routed").clone();
    let texts: Vec<&str> = posts.iter().map(|p| p.text.as_str()).collect();

    let profiled = std::env::var("POSTASSAY_BENCH_PROFILE").ok();
    if profiled.as_deref() == Some("detect") {
        let t = Instant::now();
        let found = texts.iter().filter(|t| detector.detect(t).is_some()).count();
        println!(
            "profile detect: {found} of {} posts, one thread, in {:.2} s",
            texts.len(),
            t.elapsed().as_secs_f64()
        );
        return;
    }
    if profiled.as_deref().is_some_and(|p| p != routed.name().as_str()) {
        // Profiling a chain that needs no detections.
        profile(profiled.as_deref().unwrap_or_default(), &posts, &analyzers, &[]);
        return;
    }

    // Detections for the routed chain's analysis below (the build rounds
    // time detection, cold and warm, separately).
    let detections = detector.detect_all(&texts);
    let routed_share = detections.iter().filter(|d| d.is_some()).count();

    if let Some(name) = profiled {
        profile(&name, &posts, &analyzers, &detections);
        return;
    }

    println!();
    analysis_table(&posts, &analyzers, &detections);
    println!();
    unspaced_table();
    println!();
    build_table(&posts, &analyzers, &texts, repeats, &detector, learn_seconds);
    println!(
        "(routed: {:.1}% of posts detected confidently, in one of {} languages or another)",
        100.0 * routed_share as f64 / posts.len().max(1) as f64,
        detector.languages().map_or(0, <[LangCode]>::len)
    );
}

// ---------------------------------------------------------------- analysis

/// One analysis measurement.
struct Throughput {
    label: String,
    tokens: u64,
    seconds: f64,
    /// Start of the SHA-256 of every token (text, position, offsets): equal
    /// digests across code changes mean identical output on this corpus.
    digest: String,
}

/// Tokens per second of each analysis, one thread, over every post.
fn analysis_table(posts: &[Post], analyzers: &[Analyzer], detections: &[Option<Detection>]) {
    let mut rows = Vec::new();
    rows.push(time_analysis("unicode words + lowercase", |mut h| {
        let mut n = 0u64;
        for p in posts {
            for w in p.text.unicode_words() {
                let lower = w.to_lowercase();
                if let Some(h) = h.as_deref_mut() {
                    h.update(lower.as_bytes());
                }
                black_box(lower);
                n += 1;
            }
        }
        n
    }));
    let mut default = default_analyzer();
    rows.push(time_analysis("tantivy default tokenizer", |mut h| {
        posts.iter().map(|p| count_tokens(&mut default, &p.text, h.as_deref_mut())).sum()
    }));
    for a in analyzers {
        let mut fields: Vec<TextAnalyzer> = a.fields().iter().map(|f| f.analyzer.clone()).collect();
        rows.push(time_analysis(a.name().as_str(), |mut h| {
            let mut n = 0;
            for (i, p) in posts.iter().enumerate() {
                let slot = a.field_for_post(p.lang, detections.get(i).and_then(Option::as_ref));
                if let Some(f) = fields.get_mut(slot) {
                    n += count_tokens(f, &p.text, h.as_deref_mut());
                }
            }
            n
        }));
    }
    let base = rows.get(1).map_or(1.0, |r| r.seconds);
    println!("analysis, one thread        tokens   seconds  Mtokens/s  time ÷ default  digest");
    for r in &rows {
        println!(
            "  {:<24} {:>10} {:>9.3} {:>10.2} {:>15.2}  {}",
            r.label,
            r.tokens,
            r.seconds,
            r.tokens as f64 / r.seconds / 1e6,
            r.seconds / base,
            r.digest
        );
    }
    println!("  (routed: analysis only, posts routed by the detections above)");
}

/// Analysis time of the `words` tokenizer with each `unspaced` setting on
/// the gold sentences of `ud_nospace/` (each text 20 times), against
/// `characters`.
fn unspaced_table() {
    let data = std::env::var_os("POSTASSAY_BENCH_DATA")
        .map_or_else(|| std::path::PathBuf::from("../shared/data"), std::path::PathBuf::from);
    let dir = data.join(postassay::diagnose::data::NOSPACE_DIR);
    if !dir.is_dir() {
        println!("unspaced: skipped, {} is absent (set POSTASSAY_BENCH_DATA=DIR)", dir.display());
        return;
    }
    println!(
        "unspaced settings of the words tokenizer on {} (20 passes; µs per sentence, time ÷ \
         characters)",
        dir.display()
    );
    for lang in ["th", "zh", "ja"] {
        let path = dir.join(format!("{lang}.words.tsv"));
        let Ok(gold) = postassay::diagnose::data::read_word_gold(&path) else {
            println!("  {lang}: {} unreadable", path.display());
            continue;
        };
        let bytes: usize = gold.iter().map(|g| g.text.len()).sum();
        let mut line = format!("  {lang} ({} sentences, {bytes} bytes):", gold.len());
        let mut base = f64::NAN;
        for setting in Unspaced::ALL {
            let mut analyzer = TextAnalyzer::from(WordTokenizer::new(setting));
            let row = time_analysis(setting.as_str(), |mut h| {
                let mut n = 0;
                for _ in 0..20 {
                    for g in &gold {
                        n += count_tokens(&mut analyzer, &g.text, h.as_deref_mut());
                    }
                    h = None;
                }
                n
            });
            let per_sentence = row.seconds / (20 * gold.len().max(1)) as f64 * 1e6;
            if setting == Unspaced::Characters {
                base = row.seconds;
            }
            line.push_str(&format!(
                " {} {per_sentence:.1} µs ({:.1}×)",
                setting.as_str(),
                row.seconds / base
            ));
        }
        println!("{line}");
    }
}

/// Run `work` twice (the first, with a digest of every token, warms caches
/// and memos) and time the second.
fn time_analysis(label: &str, mut work: impl FnMut(Option<&mut Sha256>) -> u64) -> Throughput {
    let mut hasher = Sha256::new();
    black_box(work(Some(&mut hasher)));
    let digest: String = hasher.finalize().iter().take(6).map(|b| format!("{b:02x}")).collect();
    let t = Instant::now();
    let tokens = work(None);
    Throughput { label: label.to_string(), tokens, seconds: t.elapsed().as_secs_f64(), digest }
}

/// Count the tokens of `text`; with a hasher, hash each token's text,
/// position and offsets too.
fn count_tokens(analyzer: &mut TextAnalyzer, text: &str, hasher: Option<&mut Sha256>) -> u64 {
    let mut stream = analyzer.token_stream(text);
    let mut n = 0;
    match hasher {
        Some(h) => {
            while stream.advance() {
                let t = stream.token();
                h.update(t.text.as_bytes());
                for v in [t.position, t.offset_from, t.offset_to] {
                    h.update((v as u64).to_le_bytes());
                }
                n += 1;
            }
        }
        None => {
            while stream.advance() {
                black_box(stream.token().text.len());
                n += 1;
            }
        }
    }
    n
}

/// Analyse every post 10 times with one chain (`default` for tantivy's
/// default tokenizer), for a profiler.
fn profile(name: &str, posts: &[Post], analyzers: &[Analyzer], detections: &[Option<Detection>]) {
    let mut fields: Vec<TextAnalyzer> = match analyzers.iter().find(|a| a.name().as_str() == name) {
        Some(a) => a.fields().iter().map(|f| f.analyzer.clone()).collect(),
        None if name == "default" => vec![default_analyzer()],
        None => {
            eprintln!("POSTASSAY_BENCH_PROFILE: no chain {name:?} (a built-in name or default)");
            return;
        }
    };
    let analyzer = analyzers.iter().find(|a| a.name().as_str() == name);
    let t = Instant::now();
    let mut n = 0;
    for _ in 0..10 {
        for (i, p) in posts.iter().enumerate() {
            let det = detections.get(i).and_then(Option::as_ref);
            let slot = analyzer.map_or(0, |a| a.field_for_post(p.lang, det));
            if let Some(f) = fields.get_mut(slot) {
                n += count_tokens(f, &p.text, None);
            }
        }
    }
    println!("profile {name}: {n} tokens in {:.2} s", t.elapsed().as_secs_f64());
}

/// What tantivy registers as its `default` tokenizer.
fn default_analyzer() -> TextAnalyzer {
    TextAnalyzer::builder(SimpleTokenizer::default())
        .filter(RemoveLongFilter::limit(40))
        .filter(LowerCaser)
        .build()
}

// ------------------------------------------------------------------ builds

/// Build times of one row of the build table: seconds, and the ratio to the
/// default build made just before, per round.
#[derive(Default)]
struct Samples {
    seconds: Vec<f64>,
    ratios: Vec<f64>,
}

impl Samples {
    fn push(&mut self, seconds: f64, default: f64) {
        self.seconds.push(seconds);
        self.ratios.push(seconds / default);
    }

    /// Print the medians and the range of the ratios, with the target.
    fn print(&self, label: &str, target: Option<f64>) {
        let ratio = median(&self.ratios);
        let lo = self.ratios.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = self.ratios.iter().copied().fold(0.0, f64::max);
        let verdict = match target {
            Some(t) if ratio <= t => format!("  ≤ {t:.1}× met"),
            Some(t) => format!("  ≤ {t:.1}× MISSED"),
            None => String::new(),
        };
        println!(
            "  {label:<30} {:>8.2} {ratio:>9.2} {:>13}{verdict}",
            median(&self.seconds),
            format!("{lo:.2}–{hi:.2}")
        );
    }
}

/// Build every index in `repeats` rounds, each chain right after a default
/// build (so slow drifts of a shared machine hit both), and print medians.
/// The routed chain's rounds also detect the languages into an empty cache
/// (cold) and read them back (warm).
fn build_table(
    posts: &[Post],
    analyzers: &[Analyzer],
    texts: &[&str],
    repeats: usize,
    detector: &LangDetector,
    learn_seconds: f64,
) {
    let cache_root = tempfile::tempdir().expect("a temporary directory");
    let mut default = Samples::default();
    let mut chains: Vec<Samples> = analyzers.iter().map(|_| Samples::default()).collect();
    let (mut cold, mut warm) = (Samples::default(), Samples::default());
    let (mut routed_cold, mut routed_warm) = (Samples::default(), Samples::default());
    // Chains whose hashtags step learns corpus words, with that pass added.
    let mut with_table: Vec<Samples> = analyzers.iter().map(|_| Samples::default()).collect();
    for round in 0..repeats {
        for ((a, samples), table) in analyzers.iter().zip(chains.iter_mut()).zip(&mut with_table) {
            let d = corpus::default_build(posts, 1);
            default.push(d, d);
            if a.detector().is_none() {
                let index = ChainIndex::build(a, posts, &[]).expect("the index builds");
                let b = index.cost().build_seconds;
                samples.push(b, d);
                if a.spec().needs_word_freqs() {
                    table.push(b + learn_seconds, d);
                }
                continue;
            }
            let cache = DetectCache::new(cache_root.path().join(format!("round{round}")));
            let t = Instant::now();
            let first = cache.detect_all(detector, texts);
            let c = t.elapsed().as_secs_f64();
            assert!(!first.from_cache, "an empty cache cannot hit");
            assert!(first.write_error.is_none(), "{:?}", first.write_error);
            let t = Instant::now();
            let again = cache.detect_all(detector, texts);
            let w = t.elapsed().as_secs_f64();
            assert!(again.from_cache, "the second lookup hits the cache");
            assert!(again.detections == first.detections, "the cache returns what was detected");
            let index = ChainIndex::build(a, posts, &first.detections).expect("the index builds");
            let b = index.cost().build_seconds;
            samples.push(b, d);
            cold.push(c, d);
            warm.push(w, d);
            routed_cold.push(c + b, d);
            routed_warm.push(w + b, d);
        }
    }
    println!("index build (median of {repeats})       seconds  ÷ default  ÷ default range  target");
    default.print("tantivy default tokenizer", None);
    let langs = detector.languages().map_or(0, <[LangCode]>::len);
    for ((a, samples), table) in analyzers.iter().zip(&chains).zip(&with_table) {
        let name = a.name().as_str();
        if a.detector().is_some() {
            samples.print(&format!("{name} (index only)"), None);
            let kind = detector.kind();
            cold.print(&format!("detection cold ({kind}, {langs} languages)"), None);
            warm.print("detection warm (cache)", None);
            routed_cold.print(&format!("{name} cold"), Some(4.0));
            routed_warm.print(&format!("{name} warm"), Some(2.0));
        } else {
            let target = match name {
                "standard" => Some(1.2),
                "stemmed" => Some(1.6),
                "hashtag" => Some(1.5),
                _ => None,
            };
            samples.print(name, target);
            if a.spec().needs_word_freqs() {
                table.print(&format!("{name} + word table"), target);
            }
        }
    }
}
