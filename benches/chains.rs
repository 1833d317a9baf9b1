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
//!   cache), added to the routed build.
//!
//! Machines are noisy, so the figures to keep are the ratios to the default
//! build measured in the same run. Each build is repeated (round robin) and
//! the fastest repeat is kept.
//!
//! Run: `cargo bench --bench chains` (200 000 posts). Environment:
//! `POSTASSAY_BENCH_POSTS=N` (posts; the reference figures use 1 000 000),
//! `POSTASSAY_BENCH_REPEATS=N` (repeats per build, default 3).

use std::collections::HashSet;
use std::hint::black_box;
use std::sync::Arc;
use std::time::Instant;

use postassay::analysis::detect::{Detection, LangDetector};
use postassay::analysis::hashtag::WordFreqs;
use postassay::analysis::{builtin_chains, AnalysisContext, Analyzer};
use postassay::bench::detect_cache::DetectCache;
use postassay::ids::PostId;
use postassay::index::ChainIndex;
use postassay::input::{LangCode, Post};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
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

/// Corpus size from which `postassay run` indexes on every core (the same
/// rule as `bench::run`).
const PARALLEL_INDEXING_FROM: usize = 50_000;

/// Indexing memory budget of `ChainIndex::build` (same writer settings).
const WRITER_BUDGET_BYTES: usize = 120_000_000;

/// Seed of the corpus generator.
const SEED: u64 = 0x706f_7374;

fn main() {
    let posts_wanted = env_usize("POSTASSAY_BENCH_POSTS", DEFAULT_POSTS);
    let repeats = env_usize("POSTASSAY_BENCH_REPEATS", DEFAULT_REPEATS).max(1);
    let threads = if posts_wanted >= PARALLEL_INDEXING_FROM {
        std::thread::available_parallelism().map_or(1, |n| n.get())
    } else {
        1
    };

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
    println!("indexing threads: {threads}; builds: best of {repeats}");
    for p in posts.iter().step_by(posts.len().div_ceil(4).max(1)) {
        println!("  sample: {}", p.text);
    }

    let en = LangCode::parse("en").expect("en is a valid code");
    let chains = builtin_chains(en).expect("the built-in chains parse");
    let learn_started = Instant::now();
    let freqs = WordFreqs::learn(posts.iter().map(|p| p.text.as_str()));
    let learn_seconds = learn_started.elapsed().as_secs_f64();
    println!(
        "hashtag word table learned from the corpus in {learn_seconds:.2} s ({} words; \
         once per run, not part of any build below)",
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

    // Detection: cold (empty cache: detect on 2 threads, write the cache)
    // and warm (read the cache back), fastest of the repeats.
    let cache_root = tempfile::tempdir().expect("a temporary directory");
    let mut cold = f64::INFINITY;
    let mut warm = f64::INFINITY;
    let mut detections = Vec::new();
    for r in 0..repeats {
        let cache = DetectCache::new(cache_root.path().join(format!("cold{r}")));
        let t = Instant::now();
        let got = cache.detect_all(&detector, &texts);
        cold = cold.min(t.elapsed().as_secs_f64());
        assert!(!got.from_cache, "an empty cache cannot hit");
        let t = Instant::now();
        let again = cache.detect_all(&detector, &texts);
        warm = warm.min(t.elapsed().as_secs_f64());
        assert!(again.from_cache, "the second read hits the cache");
        assert!(again.detections == got.detections, "the cache returns what was detected");
        detections = got.detections;
    }
    let routed_share = detections.iter().filter(|d| d.is_some()).count();

    println!();
    analysis_table(&posts, &analyzers, &detections);
    println!();
    build_table(&posts, &analyzers, &detections, threads, repeats, cold, warm, &detector);
    println!(
        "(routed: {:.1}% of posts detected confidently in one of {} languages)",
        100.0 * routed_share as f64 / posts.len().max(1) as f64,
        detector.allowlist().map_or(0, <[LangCode]>::len)
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
}

/// Tokens per second of each analysis, one thread, over every post.
fn analysis_table(posts: &[Post], analyzers: &[Analyzer], detections: &[Option<Detection>]) {
    let mut rows = Vec::new();
    rows.push(time_analysis("unicode words + lowercase", || {
        let mut n = 0u64;
        for p in posts {
            for w in p.text.unicode_words() {
                black_box(w.to_lowercase());
                n += 1;
            }
        }
        n
    }));
    let mut default = default_analyzer();
    rows.push(time_analysis("tantivy default tokenizer", || {
        posts.iter().map(|p| count_tokens(&mut default, &p.text)).sum()
    }));
    for a in analyzers {
        let mut fields: Vec<TextAnalyzer> = a.fields().iter().map(|f| f.analyzer.clone()).collect();
        rows.push(time_analysis(a.name().as_str(), || {
            let mut n = 0;
            for (i, p) in posts.iter().enumerate() {
                let slot = a.field_for_post(p.lang, detections.get(i).and_then(Option::as_ref));
                if let Some(f) = fields.get_mut(slot) {
                    n += count_tokens(f, &p.text);
                }
            }
            n
        }));
    }
    let base = rows.get(1).map_or(1.0, |r| r.seconds);
    println!("analysis, one thread        tokens   seconds  Mtokens/s  time ÷ default");
    for r in &rows {
        println!(
            "  {:<24} {:>10} {:>9.3} {:>10.2} {:>15.2}",
            r.label,
            r.tokens,
            r.seconds,
            r.tokens as f64 / r.seconds / 1e6,
            r.seconds / base
        );
    }
    println!("  (routed: analysis only, posts routed by the detections above)");
}

/// Run `work` twice (the first warms caches and memos) and time the second.
fn time_analysis(label: &str, mut work: impl FnMut() -> u64) -> Throughput {
    black_box(work());
    let t = Instant::now();
    let tokens = work();
    Throughput { label: label.to_string(), tokens, seconds: t.elapsed().as_secs_f64() }
}

fn count_tokens(analyzer: &mut TextAnalyzer, text: &str) -> u64 {
    let mut stream = analyzer.token_stream(text);
    let mut n = 0;
    while stream.advance() {
        black_box(stream.token().text.len());
        n += 1;
    }
    n
}

/// What tantivy registers as its `default` tokenizer.
fn default_analyzer() -> TextAnalyzer {
    TextAnalyzer::builder(SimpleTokenizer::default())
        .filter(RemoveLongFilter::limit(40))
        .filter(LowerCaser)
        .build()
}

// ------------------------------------------------------------------ builds

/// Build every index `repeats` times, round robin, and print the fastest.
#[allow(clippy::too_many_arguments)]
fn build_table(
    posts: &[Post],
    analyzers: &[Analyzer],
    detections: &[Option<Detection>],
    threads: usize,
    repeats: usize,
    cold: f64,
    warm: f64,
    detector: &LangDetector,
) {
    let mut default_best = f64::INFINITY;
    let mut best = vec![f64::INFINITY; analyzers.len()];
    for _ in 0..repeats {
        default_best = default_best.min(default_build(posts, threads));
        for (a, b) in analyzers.iter().zip(best.iter_mut()) {
            let det = if a.detector().is_some() { detections } else { &[] };
            let index = ChainIndex::build(a, posts, det, threads).expect("the index builds");
            *b = b.min(index.cost().build_seconds);
        }
    }
    let ratio = |s: f64| s / default_best;
    println!("index build                         seconds  ÷ default  target");
    println!("  {:<32} {:>8.2} {:>10.2}", "tantivy default tokenizer", default_best, 1.0);
    for (a, &b) in analyzers.iter().zip(&best) {
        let name = a.name().as_str();
        if a.detector().is_some() {
            println!("  {:<32} {:>8.2} {:>10.2}", format!("{name} (index only)"), b, ratio(b));
            let langs = detector.allowlist().map_or(0, <[LangCode]>::len);
            println!(
                "  {:<32} {:>8.2} {:>10.2}",
                format!("detection cold ({langs} languages)"),
                cold,
                ratio(cold)
            );
            println!("  {:<32} {:>8.2} {:>10.2}", "detection warm (cache)", warm, ratio(warm));
            row_with_target(&format!("{name} cold"), b + cold, ratio(b + cold), 4.0);
            row_with_target(&format!("{name} warm"), b + warm, ratio(b + warm), 2.0);
        } else {
            let target = match name {
                "standard" => Some(1.2),
                "stemmed" => Some(1.6),
                "hashtag" => Some(1.5),
                _ => None,
            };
            match target {
                Some(t) => row_with_target(name, b, ratio(b), t),
                None => println!("  {:<32} {:>8.2} {:>10.2}", name, b, ratio(b)),
            }
        }
    }
}

fn row_with_target(label: &str, seconds: f64, ratio: f64, target: f64) {
    let verdict = if ratio <= target { "met" } else { "MISSED" };
    println!("  {label:<32} {seconds:>8.2} {ratio:>10.2}  ≤ {target:.1}× {verdict}");
}

/// Index the posts with tantivy's `default` tokenizer, with the schema and
/// writer settings of `ChainIndex::build`; seconds to analyse, index,
/// commit and finish merging.
fn default_build(posts: &[Post], threads: usize) -> f64 {
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
    let mut writer = index
        .writer_with_num_threads::<TantivyDocument>(threads, WRITER_BUDGET_BYTES)
        .expect("writer");
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
        for _ in 0..rng.gen_range(1..=3) {
            w.push_str(model.syllables[rng.gen_range(0..model.syllables.len())]);
        }
        w.push_str(model.suffixes[rng.gen_range(0..model.suffixes.len())]);
        if seen.insert(w.clone()) {
            words.push(w);
        }
    }
    Zipf::new(words)
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
    let vocabularies: Vec<Zipf> = LANGS.iter().map(|m| vocabulary(m, &mut rng)).collect();
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
fn generate_post(model: &LangModel, words: &Zipf, users: &Zipf, rng: &mut ChaCha8Rng) -> String {
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
            let style = rng.gen_range(0..10);
            for k in 0..rng.gen_range(1..=3) {
                let w = words.draw(rng).replace('\'', "");
                match style {
                    0..=4 => text.push_str(&capitalize(&w)),
                    5..=7 => text.push_str(&w),
                    _ => {
                        if k > 0 {
                            text.push('_');
                        }
                        text.push_str(&w);
                    }
                }
            }
            if rng.gen_range(0..10) == 0 {
                text.push_str("2025");
            }
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
