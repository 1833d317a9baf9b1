//! The deterministic corpus of short multilingual posts that the benchmark
//! programs (`benches/chains.rs`, `benches/scale.rs`) generate: seven
//! languages with Zipfian vocabularies, hashtags, mentions, URLs and emoji;
//! and the bare index of those posts every chain is measured against. Not a
//! benchmark itself.

use std::collections::HashSet;

use std::time::Instant;

use postassay::ids::PostId;
use postassay::index::deterministic_writer;
use postassay::input::Post;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use tantivy::schema::{IndexRecordOption, NumericOptions, Schema, TextFieldIndexing, TextOptions};
use tantivy::{Index, TantivyDocument};

/// Distinct hashtags of each language.
const TAGS_PER_LANGUAGE: usize = 5_000;

/// Seed of the corpus generator.
const SEED: u64 = 0x706f_7374;

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
pub fn generate_posts(n: usize) -> Vec<Post> {
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

/// Seconds to index `posts` with tantivy's `default` tokenizer (analyse,
/// index, commit, finish merging), with the schema of a chain index (an
/// ordinal fast field and one text field). One writer thread uses the
/// writer settings of `ChainIndex::build` ([`deterministic_writer`]); more
/// use tantivy's own writer with that many threads (and merging).
pub fn default_build(posts: &[Post], writer_threads: usize) -> f64 {
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
    let mut writer = if writer_threads <= 1 {
        deterministic_writer(&index).expect("writer")
    } else {
        index
            .writer_with_num_threads::<TantivyDocument>(
                writer_threads,
                120_000_000 * writer_threads,
            )
            .expect("writer")
    };
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
