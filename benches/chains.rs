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
use common::median;

use std::collections::HashSet;
use std::hint::black_box;
use std::sync::Arc;
use std::time::Instant;

use postassay::analysis::detect::{Detection, DetectorKind, LangDetector};
use postassay::analysis::hashtag::WordFreqs;
use postassay::analysis::{
    builtin_chains, AnalysisContext, Analyzer, ChainBody, Unspaced, WordTokenizer,
};
use postassay::bench::detect_cache::DetectCache;
use postassay::ids::PostId;
use postassay::index::{deterministic_writer, ChainIndex};
use postassay::input::{LangCode, Post};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use sha2::{Digest, Sha256};
use tantivy::schema::{IndexRecordOption, NumericOptions, Schema, TextFieldIndexing, TextOptions};
use tantivy::tokenizer::{
    LowerCaser, RemoveLongFilter, SimpleTokenizer, TextAnalyzer, TokenStream,
};
use tantivy::{Index, TantivyDocument};
use unicode_segmentation::UnicodeSegmentation;

/// Posts generated when `POSTASSAY_BENCH_POSTS` is not set.
const DEFAULT_POSTS: usize = 200_000;

/// Build repeats when `POSTASSAY_BENCH_REPEATS` is not set.
const DEFAULT_REPEATS: usize = 3;

/// Distinct hashtags of each language.
const TAGS_PER_LANGUAGE: usize = 5_000;

/// Seed of the corpus generator.
const SEED: u64 = 0x706f_7374;

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

/// A positive integer from the environment, else `default`.
fn env_usize(name: &str, default: usize) -> usize {
    match std::env::var(name) {
        Ok(v) => v.trim().parse().unwrap_or_else(|_| {
            eprintln!("{name}={v:?} is not a whole number; using {default}");
            default
        }),
        Err(_) => default,
    }
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
            let d = default_build(posts);
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

/// Index the posts with tantivy's `default` tokenizer, with the schema and
/// writer settings of `ChainIndex::build`; seconds to analyse, index,
/// commit and finish merging.
fn default_build(posts: &[Post]) -> f64 {
    let started = Instant::now();
    let dir = tempfile::Builder::new().prefix("postassay-bench-").tempdir().expect("temp dir");
    let mut builder = Schema::builder();
    let ord = builder.add_u64_field("ord", NumericOptions::default().set_fast());
    let indexing = TextFieldIndexing::default()
        .set_tokenizer("default")
        .set_index_option(IndexRecordOption::WithFreqsAndPositions);
    let text =
        builder.add_text_field("text", TextOptions::default().set_indexing_options(indexing));
    let index = Index::create_in_dir(dir.path(), builder.build()).expect("index created");
    let mut writer = deterministic_writer(&index).expect("writer");
    for (i, post) in posts.iter().enumerate() {
        let mut doc = TantivyDocument::default();
        doc.add_u64(ord, i as u64);
        doc.add_text(text, &post.text);
        writer.add_document(doc).expect("document added");
    }
    writer.commit().expect("commit");
    writer.wait_merging_threads().expect("merges finish");
    started.elapsed().as_secs_f64()
}

// ------------------------------------------------------------------ corpus

/// One language of the generated corpus.
struct LangModel {
    /// Share of posts.
    share: f64,
    /// Words written without spaces between them (Japanese).
    no_spaces: bool,
    /// Most frequent words, in rank order (they head the Zipfian list).
    function_words: &'static [&'static str],
    /// Pieces of generated content words.
    syllables: &'static [&'static str],
    /// Endings of generated content words (inflections the stemmers see).
    suffixes: &'static [&'static str],
    /// Distinct words of the language.
    vocabulary: usize,
}

/// Languages, shares and word material (common words written from memory;
/// the generated words only imitate each language's spelling).
const LANGS: &[LangModel] = &[
    LangModel {
        share: 0.40,
        no_spaces: false,
        function_words: &[
            "the", "i", "to", "a", "and", "is", "in", "it", "you", "of", "for", "on", "my", "that",
            "this", "with", "be", "at", "just", "so", "me", "have", "are", "not", "but", "we",
            "was", "all", "your", "what", "love", "now", "get", "like", "today", "new", "good",
            "day", "time", "great", "people", "can", "out", "one", "will", "go", "from", "up",
            "they", "about", "thanks", "happy", "see", "back", "don't", "it's", "i'm",
        ],
        syllables: &[
            "ba", "ker", "ton", "mar", "ket", "lin", "den", "har", "bour", "sta", "tion", "play",
            "ster", "run", "walk", "talk", "fish", "sea", "rain", "wind", "sun", "gar", "kit",
            "chen", "cof", "fee", "mor", "ning", "ev", "en", "fam", "ily", "week", "end", "trav",
            "el", "mu", "sic", "foot", "ball", "game", "ci", "ty", "riv", "er", "bridge", "work",
            "ride", "bike", "cook", "read", "book", "shop", "tea", "lake", "hill", "road", "light",
            "con", "nect", "hap", "pi", "pony",
        ],
        suffixes: &[
            "", "", "", "s", "s", "ing", "ed", "er", "ers", "ly", "ness", "ment", "ful", "es",
            "ation", "ies", "ings",
        ],
        vocabulary: 40_000,
    },
    LangModel {
        share: 0.12,
        no_spaces: false,
        function_words: &[
            "de", "la", "que", "el", "en", "y", "a", "los", "se", "del", "las", "un", "por", "con",
            "no", "una", "su", "para", "es", "al", "lo", "como", "más", "pero", "sus", "le", "ya",
            "o", "este", "sí", "porque", "esta", "muy", "hoy", "gracias", "día", "todo", "también",
            "mañana", "está", "qué", "año",
        ],
        syllables: &[
            "ca", "sa", "mer", "do", "pu", "er", "to", "pla", "ya", "ciu", "dad", "ni", "ño",
            "mon", "ta", "ña", "co", "mi", "da", "pan", "so", "fút", "bol", "mú", "si", "fies",
            "tra", "ba", "jo", "ve", "ra", "no", "cam", "po", "ma", "dre", "pa", "fé", "ár", "lu",
            "na", "ri", "o",
        ],
        suffixes: &[
            "", "", "s", "es", "ar", "ado", "ada", "ando", "ción", "ciones", "mente", "ito", "ita",
            "amos", "aron", "ía",
        ],
        vocabulary: 15_000,
    },
    LangModel {
        share: 0.08,
        no_spaces: false,
        function_words: &[
            "de", "a", "o", "que", "e", "do", "da", "em", "um", "para", "é", "com", "não", "uma",
            "os", "no", "se", "na", "por", "mais", "as", "dos", "como", "mas", "foi", "ao", "ele",
            "das", "tem", "à", "seu", "sua", "ou", "ser", "quando", "muito", "há", "nos", "já",
            "está", "eu", "também", "hoje", "obrigado", "você", "então",
        ],
        syllables: &[
            "ca", "sa", "mer", "do", "pra", "ia", "ci", "da", "de", "ma", "nhã", "pão", "fu", "te",
            "bol", "mú", "si", "fes", "ta", "tra", "ba", "lho", "fé", "ir", "mã", "jo", "ga", "ri",
            "o", "ver", "ão", "pei", "xe", "lu", "a", "sol", "noi",
        ],
        suffixes: &[
            "", "", "s", "ar", "ado", "ada", "ando", "ção", "ções", "mente", "inho", "inha",
            "amos", "aram", "ões",
        ],
        vocabulary: 10_000,
    },
    LangModel {
        share: 0.08,
        no_spaces: false,
        function_words: &[
            "de",
            "la",
            "le",
            "et",
            "les",
            "des",
            "en",
            "un",
            "du",
            "une",
            "que",
            "est",
            "pour",
            "qui",
            "dans",
            "à",
            "par",
            "plus",
            "pas",
            "au",
            "sur",
            "ne",
            "se",
            "ce",
            "il",
            "sont",
            "avec",
            "mais",
            "on",
            "nous",
            "très",
            "été",
            "aujourd'hui",
            "c'est",
            "j'ai",
            "merci",
            "bien",
            "tout",
            "fait",
            "être",
            "où",
            "ça",
            "cette",
            "mon",
        ],
        syllables: &[
            "pa", "ris", "mai", "son", "che", "min", "ga", "re", "bé", "ché", "fè", "mar", "port",
            "ven", "té", "ê", "te", "cui", "sine", "pain", "fro", "mage", "vil", "la", "mon", "ta",
            "gne", "plage", "so", "leil", "jour", "nuit", "é", "cole", "tra", "vail", "mu",
            "sique", "fê", "jar", "din", "ca", "fé", "bou", "lan", "ge", "rie", "châ", "teau",
            "fran", "çais",
        ],
        suffixes: &[
            "", "", "s", "e", "es", "er", "é", "ée", "ment", "tion", "tions", "eur", "euse", "ait",
            "ons", "ez",
        ],
        vocabulary: 10_000,
    },
    LangModel {
        share: 0.08,
        no_spaces: false,
        function_words: &[
            "der", "die", "und", "in", "den", "von", "zu", "das", "mit", "sich", "des", "auf",
            "für", "ist", "im", "dem", "nicht", "ein", "eine", "als", "auch", "es", "an", "werden",
            "aus", "er", "hat", "dass", "sie", "nach", "wird", "bei", "einer", "um", "am", "sind",
            "noch", "wie", "einem", "über", "einen", "so", "zum", "war", "haben", "nur", "oder",
            "aber", "vor", "zur", "bis", "heute", "schön", "mehr", "jetzt",
        ],
        syllables: &[
            "hau", "ber", "gen", "lich", "schaf", "ten", "mar", "kt", "haf", "fähr", "stra", "ße",
            "wet", "ter", "grü", "kö", "bü", "ro", "zei", "tung", "fa", "mi", "lie", "wo", "che",
            "stadt", "bahn", "zug", "mor", "sonn", "tag", "fuß", "ball", "spiel", "kü", "brot",
            "bier", "gar", "berg", "see", "wald", "lüf", "schön", "ar", "beit", "kin", "der",
            "fahr", "rad",
        ],
        suffixes: &[
            "", "", "en", "e", "er", "es", "ung", "ungen", "lich", "keit", "chen", "ern", "te",
            "st",
        ],
        vocabulary: 10_000,
    },
    LangModel {
        share: 0.05,
        no_spaces: false,
        function_words: &[
            "di", "e", "il", "la", "che", "è", "per", "un", "in", "a", "non", "del", "una", "con",
            "i", "le", "si", "da", "al", "sono", "anche", "ma", "come", "più", "della", "lo", "mi",
            "questo", "ci", "se", "tutti", "oggi", "grazie", "molto", "bella", "buona", "ho",
            "nel", "gli", "io", "cosa", "sempre",
        ],
        syllables: &[
            "ca", "sa", "mer", "to", "por", "piaz", "za", "cit", "tà", "ma", "re", "mon", "ta",
            "gna", "pa", "ne", "cal", "cio", "mu", "si", "fe", "sta", "la", "vo", "ro", "caf",
            "fè", "ami", "co", "gior", "no", "not", "te", "so", "le", "ve", "zia",
        ],
        suffixes: &[
            "", "", "i", "e", "a", "o", "are", "ato", "ata", "ando", "zione", "zioni", "mente",
            "etto", "etta", "iamo",
        ],
        vocabulary: 10_000,
    },
    LangModel {
        share: 0.04,
        no_spaces: false,
        function_words: &[
            "de", "van", "een", "het", "en", "in", "is", "dat", "op", "te", "zijn", "voor", "met",
            "die", "niet", "aan", "er", "om", "ook", "als", "dan", "maar", "bij", "of", "uit",
            "nog", "wat", "naar", "heb", "ik", "je", "we", "zo", "wel", "vandaag", "mooi", "dank",
            "goed", "leuk", "lekker", "nieuwe",
        ],
        syllables: &[
            "huis", "markt", "ha", "ven", "fiets", "stad", "straat", "we", "ter", "zee", "brood",
            "kaas", "bier", "voet", "bal", "wed", "strijd", "trein", "sta", "tion", "werk", "dag",
            "week", "ein", "de", "zon", "re", "gen", "wind", "kin", "ren", "groen", "tuin", "boek",
            "win", "kel", "ij", "oe",
        ],
        suffixes: &[
            "", "", "en", "s", "e", "te", "de", "ing", "ingen", "lijk", "heid", "tje", "jes", "er",
        ],
        vocabulary: 10_000,
    },
    LangModel {
        share: 0.05,
        no_spaces: false,
        function_words: &[
            "и",
            "в",
            "не",
            "на",
            "я",
            "что",
            "с",
            "он",
            "как",
            "это",
            "по",
            "но",
            "а",
            "к",
            "все",
            "у",
            "так",
            "мы",
            "же",
            "за",
            "вы",
            "от",
            "было",
            "сегодня",
            "очень",
            "спасибо",
            "всё",
            "только",
            "ещё",
            "уже",
            "новый",
            "день",
            "хорошо",
        ],
        syllables: &[
            "ма", "ша", "го", "род", "ры", "нок", "мо", "ре", "ули", "ца", "до", "ро", "га",
            "хлеб", "фут", "бол", "му", "зы", "ка", "ра", "бо", "та", "ко", "фе", "дру", "зья",
            "пра", "зд", "ник", "вес", "на", "ле", "то", "зи",
        ],
        suffixes: &[
            "", "", "а", "ы", "ой", "ом", "ами", "ах", "ский", "ская", "ние", "ния", "ать", "ает",
            "или",
        ],
        vocabulary: 10_000,
    },
    LangModel {
        share: 0.03,
        no_spaces: false,
        function_words: &[
            "ve",
            "bir",
            "bu",
            "da",
            "de",
            "için",
            "ile",
            "çok",
            "ne",
            "ama",
            "gibi",
            "daha",
            "en",
            "var",
            "ben",
            "sen",
            "o",
            "mi",
            "güzel",
            "bugün",
            "teşekkürler",
            "her",
            "şey",
            "kadar",
            "sonra",
            "yeni",
            "iyi",
            "gün",
        ],
        syllables: &[
            "ka", "pı", "li", "man", "çar", "şı", "pa", "za", "sı", "ğı", "şe", "hir", "de", "niz",
            "yol", "ek", "mek", "fut", "bol", "mü", "zik", "hve", "ar", "daş", "ba", "yram", "yaz",
            "kış", "ı", "ö", "ü",
        ],
        suffixes: &[
            "", "", "lar", "ler", "ı", "i", "da", "de", "dan", "den", "lık", "lik", "ımız", "imiz",
            "yor",
        ],
        vocabulary: 8_000,
    },
    LangModel {
        share: 0.03,
        no_spaces: false,
        function_words: &[
            "και",
            "το",
            "να",
            "η",
            "ο",
            "της",
            "την",
            "σε",
            "του",
            "με",
            "για",
            "τα",
            "που",
            "δεν",
            "από",
            "είναι",
            "οι",
            "θα",
            "στο",
            "στην",
            "σήμερα",
            "ευχαριστώ",
            "πολύ",
            "καλή",
            "μέρα",
            "όλα",
        ],
        syllables: &[
            "θα", "λασ", "σα", "πό", "λη", "α", "γο", "ρά", "λι", "μά", "νι", "δρό", "μος", "ψω",
            "μί", "μου", "σι", "κή", "φί", "λοι", "γιορ", "τή", "κα", "λο", "ρι",
        ],
        suffixes: &["", "", "ς", "α", "ες", "ων", "ος", "ου", "η", "ης", "ει", "ουν", "ια"],
        vocabulary: 6_000,
    },
    LangModel {
        share: 0.04,
        no_spaces: true,
        function_words: &[
            "の",
            "に",
            "は",
            "を",
            "た",
            "が",
            "で",
            "て",
            "と",
            "し",
            "ある",
            "いる",
            "も",
            "する",
            "から",
            "な",
            "こと",
            "今日",
            "ありがとう",
            "すごい",
            "本当に",
        ],
        syllables: &[
            "カ", "フェ", "コー", "ヒー", "サッ", "カー", "ラー", "メン", "テ", "レ", "ビ", "ゲー",
            "ム", "東", "京", "駅", "港", "市", "場", "天", "気", "仕", "事", "友", "達", "映",
            "画", "音", "楽",
        ],
        suffixes: &["", "", "", "です", "ます", "した"],
        vocabulary: 4_000,
    },
];

/// Emoji, including modifier, ZWJ, flag and variation-selector sequences.
const EMOJI: &[&str] = &[
    "😀",
    "😂",
    "❤️",
    "👍",
    "👍🏽",
    "🎉",
    "🔥",
    "🙏",
    "😍",
    "🇩🇪",
    "🇫🇷",
    "👨‍👩‍👧",
    "☕",
    "⚽",
    "🌧️",
    "🐟",
    "✨",
    "💯",
    "😭",
    "🤔",
];

/// Hosts of generated URLs (reserved example domains and short hosts).
const HOSTS: &[&str] =
    &["example.com", "news.example.org", "shop.example.net", "blog.example.de", "t.example"];

/// A Zipfian vocabulary: words in rank order and the cumulative weights
/// `Σ 1/r` (exponent 1, as word frequencies roughly follow).
struct Zipf {
    words: Vec<String>,
    cumulative: Vec<f64>,
}

impl Zipf {
    fn new(words: Vec<String>) -> Zipf {
        let mut total = 0.0;
        let cumulative = (1..=words.len())
            .map(|r| {
                total += 1.0 / r as f64;
                total
            })
            .collect();
        Zipf { words, cumulative }
    }

    fn draw<'a>(&'a self, rng: &mut ChaCha8Rng) -> &'a str {
        let total = self.cumulative.last().copied().unwrap_or(0.0);
        let x = rng.gen::<f64>() * total;
        let i = self.cumulative.partition_point(|&c| c < x).min(self.words.len() - 1);
        &self.words[i]
    }
}

/// The words of one language: function words first, then generated words.
fn vocabulary(model: &LangModel, rng: &mut ChaCha8Rng) -> Zipf {
    let mut seen: HashSet<String> = HashSet::new();
    let mut words: Vec<String> = Vec::with_capacity(model.vocabulary);
    for w in model.function_words {
        if seen.insert(w.to_string()) {
            words.push(w.to_string());
        }
    }
    let mut attempts = 0;
    while words.len() < model.vocabulary && attempts < model.vocabulary * 50 {
        attempts += 1;
        let mut w = String::new();
        // One to three pieces (45%, 40%, 15%) and an ending.
        let pieces = match rng.gen_range(0..20) {
            0..=8 => 1,
            9..=16 => 2,
            _ => 3,
        };
        for _ in 0..pieces {
            w.push_str(model.syllables[rng.gen_range(0..model.syllables.len())]);
        }
        w.push_str(model.suffixes[rng.gen_range(0..model.suffixes.len())]);
        if seen.insert(w.clone()) {
            words.push(w);
        }
    }
    Zipf::new(words)
}

/// Hashtag bodies of one language, in rank order (tags repeat like words
/// do): one to three words joined CamelCase (50%), lower case (30%) or with
/// underscores (20%), a tenth of them followed by a year.
fn tag_vocabulary(words: &Zipf, rng: &mut ChaCha8Rng) -> Zipf {
    let mut seen = HashSet::new();
    let mut tags = Vec::new();
    while tags.len() < TAGS_PER_LANGUAGE {
        let style = rng.gen_range(0..10);
        let mut tag = String::new();
        for k in 0..rng.gen_range(1..=3) {
            let w = words.draw(rng).replace('\'', "");
            match style {
                0..=4 => tag.push_str(&capitalize(&w)),
                5..=7 => tag.push_str(&w),
                _ => {
                    if k > 0 {
                        tag.push('_');
                    }
                    tag.push_str(&w);
                }
            }
        }
        if rng.gen_range(0..10) == 0 {
            tag.push_str("2025");
        }
        if seen.insert(tag.clone()) {
            tags.push(tag);
        }
    }
    Zipf::new(tags)
}

/// Upper-case the first char of `w`.
fn capitalize(w: &str) -> String {
    let mut chars = w.chars();
    match chars.next() {
        Some(c) => c.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// `n` deterministic posts of about 170 bytes (120–220).
fn generate_posts(n: usize) -> Vec<Post> {
    let mut rng = ChaCha8Rng::seed_from_u64(SEED);
    let vocabularies: Vec<(Zipf, Zipf)> = LANGS
        .iter()
        .map(|m| {
            let words = vocabulary(m, &mut rng);
            let tags = tag_vocabulary(&words, &mut rng);
            (words, tags)
        })
        .collect();
    let users: Vec<String> = (0..5000)
        .map(|i| {
            let en = &LANGS[0];
            let mut u = String::new();
            for _ in 0..rng.gen_range(1..=2) {
                u.push_str(en.syllables[rng.gen_range(0..en.syllables.len())]);
            }
            if i % 3 == 0 {
                u.push('_');
            }
            if i % 4 == 0 {
                u.push_str(&rng.gen_range(1..100).to_string());
            }
            u
        })
        .collect();
    let users = Zipf::new(users);
    let mut shares = Vec::with_capacity(LANGS.len());
    let mut acc = 0.0;
    for m in LANGS {
        acc += m.share;
        shares.push(acc);
    }
    (0..n)
        .map(|i| {
            let x = rng.gen::<f64>() * acc;
            let lang = shares.partition_point(|&s| s < x).min(LANGS.len() - 1);
            let text = generate_post(&LANGS[lang], &vocabularies[lang], &users, &mut rng);
            Post { id: PostId(format!("p{i}")), text, lang: None }
        })
        .collect()
}

/// One post: words of one language with punctuation, and now and then a
/// tag, a mention, a URL or an emoji.
fn generate_post(
    model: &LangModel,
    (words, tags): &(Zipf, Zipf),
    users: &Zipf,
    rng: &mut ChaCha8Rng,
) -> String {
    let target = rng.gen_range(120..=220);
    let sep = if model.no_spaces { "" } else { " " };
    let mut text = String::with_capacity(target + 40);
    let mut capital = true;
    while text.len() < target {
        if !text.is_empty() && !text.ends_with(' ') {
            text.push_str(sep);
        }
        let roll = rng.gen::<f64>();
        if roll < 0.04 {
            text.push('#');
            text.push_str(tags.draw(rng));
        } else if roll < 0.065 {
            text.push('@');
            text.push_str(users.draw(rng));
        } else if roll < 0.075 {
            let host = HOSTS[rng.gen_range(0..HOSTS.len())];
            text.push_str("https://");
            text.push_str(host);
            text.push('/');
            for _ in 0..rng.gen_range(6..12) {
                text.push(char::from(
                    b"abcdefghijkmnpqrstuvwxyzABCDEFGH0123456789"[rng.gen_range(0..42)],
                ));
            }
            if rng.gen_range(0..3) == 0 {
                text.push_str("?id=");
                text.push_str(&rng.gen_range(1..10_000).to_string());
            }
        } else if roll < 0.12 {
            text.push_str(EMOJI[rng.gen_range(0..EMOJI.len())]);
        } else {
            let w = words.draw(rng);
            let w = match rng.gen_range(0..100) {
                _ if capital => capitalize(w),
                0..=3 => capitalize(w),
                4 => w.to_uppercase(),
                _ => w.to_string(),
            };
            text.push_str(&w);
            capital = false;
            match rng.gen_range(0..100) {
                0..=5 => text.push(','),
                6..=9 => {
                    text.push_str(if model.no_spaces { "。" } else { "." });
                    capital = true;
                }
                10 => text.push('!'),
                _ => {}
            }
        }
    }
    match rng.gen_range(0..6) {
        0 => text.push('!'),
        1 => text.push('?'),
        2 => text.push_str("!!"),
        _ => {}
    }
    text
}
