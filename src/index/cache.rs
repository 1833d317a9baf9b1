//! A disk cache of built chain indexes, so that a second `postassay run` on
//! the same corpus rebuilds only the chains whose definition changed.
//!
//! Place in the data flow: part of `index`; `bench` computes each chain's
//! [`key`] and asks [`IndexCache::open`] before building, or
//! [`IndexCache::build`] to build into the cache.
//!
//! An entry is a directory `<key>/` holding the tantivy index and
//! `manifest.json`. It is built in a directory named
//! `.unfinished-<key>-<pid>-<nanos>`; the manifest is written (and synced)
//! last, then the directory is renamed to `<key>`, so an interrupted build
//! (a kill, a full disk) never leaves a directory that looks whole: a
//! `<key>/` without a readable manifest naming its own key is a miss and is
//! rebuilt. Two runs that build the same entry at once both succeed: the
//! first rename wins and the second run uses the winner's entry.
//!
//! Key ([`key`]): SHA-256 of the cache format version, the tool's version,
//! the SHA-256 of the corpus bytes, the chain's full definition as JSON
//! (every step and setting, the vocabulary sources and the routing and
//! detector settings), a fingerprint of what the chain's analysis makes of
//! a few fixed texts (so a change of the analysis code changes the key even
//! within one version) and, for routed chains, the language detected for
//! each post (what decides each post's field).
//!
//! Nothing is evicted automatically; `postassay cache` lists the entries
//! with their size and age and removes them.

use std::fmt::Write as _;
use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::time::{SystemTime, UNIX_EPOCH};

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use tantivy::tokenizer::TokenStream;

use super::{BuildCost, ChainIndex};
use crate::analysis::detect::Detection;
use crate::analysis::Analyzer;
use crate::error::{Error, Result};
use crate::input::Post;

/// Version of the cache layout and of the index files postassay writes;
/// raise it whenever either changes so old entries are never read.
pub const FORMAT_VERSION: u32 = 1;

/// File of an entry written last.
pub const MANIFEST: &str = "manifest.json";

/// Prefix of an entry still being built (or left by an interrupted build).
pub const UNFINISHED_PREFIX: &str = ".unfinished-";

/// Texts whose analysis fingerprints a chain's behaviour (several scripts,
/// a hashtag, a mention, a URL, an elision, an inflected form).
const PROBES: &[&str] = &[
    "The ferries weren't running: #StormWarning @harbour_ops https://example.com/a?b=1",
    "Die Fährhäfen in Kiel sind heute wegen des Sturms geschlossen.",
    "L'écluse du port est fermée aujourd'hui à cause de la tempête.",
    "Los puertos están cerrados; las embarcaciones esperan.",
    "Вчера вечером мы долго гуляли по городу.",
    "今日は港が閉まっています。 ฝนตกหนักมาก 🎉 12:30",
];

/// What goes into an entry's key; see the module docs.
#[derive(Debug, Clone, Copy)]
pub struct KeyParts<'a> {
    /// The tool's version (`CARGO_PKG_VERSION` in production).
    pub tool_version: &'a str,
    /// Hex SHA-256 of the corpus file's bytes.
    pub corpus_sha256: &'a str,
    /// The chain's definition as JSON.
    pub chain_definition: &'a str,
    /// The chain's analysis (for [`analysis_fingerprint`]).
    pub analyzer: &'a Analyzer,
    /// The detection of each post the chain reads (empty when not routed).
    pub detections: &'a [Option<Detection>],
}

/// The key of an entry (hex SHA-256 of [`KeyParts`], see the module docs).
pub fn key(parts: &KeyParts<'_>) -> String {
    let mut h = Sha256::new();
    let mut field = |bytes: &[u8]| {
        h.update((bytes.len() as u64).to_le_bytes());
        h.update(bytes);
    };
    field(format!("postassay index cache v{FORMAT_VERSION}").as_bytes());
    field(parts.tool_version.as_bytes());
    field(parts.corpus_sha256.as_bytes());
    field(parts.chain_definition.as_bytes());
    field(analysis_fingerprint(parts.analyzer).as_bytes());
    let mut detections = String::with_capacity(parts.detections.len() * 4);
    for d in parts.detections {
        match d {
            // The field a post goes to depends on the language and, through
            // the route's confidence floor, on the confidence.
            Some(d) => {
                let _ = writeln!(detections, "{} {}", d.lang.as_str(), d.confidence);
            }
            None => detections.push('\n'),
        }
    }
    field(detections.as_bytes());
    crate::input::hex(&h.finalize())
}

/// Every token (text and position) each field of `analyzer` makes of the
/// probe texts, as one string.
pub fn analysis_fingerprint(analyzer: &Analyzer) -> String {
    let mut out = String::new();
    for fa in analyzer.fields() {
        out.push_str(&fa.key);
        out.push('\n');
        let mut text_analyzer = fa.analyzer.clone();
        for probe in PROBES {
            let mut stream = text_analyzer.token_stream(probe);
            while stream.advance() {
                let t = stream.token();
                let _ = write!(out, "{}@{} ", t.text, t.position);
            }
            out.push('\n');
        }
    }
    out
}

/// The manifest of an entry (written last; see the module docs).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Manifest {
    /// `postassay index cache v<FORMAT_VERSION>`.
    pub format: String,
    /// The entry's key (its directory name).
    pub key: String,
    /// Version of the tool that built it.
    pub tool_version: String,
    /// Name of the chain.
    pub chain: String,
    /// Hex SHA-256 of the corpus file.
    pub corpus_sha256: String,
    /// Posts indexed.
    pub posts: u64,
    /// When the build finished, in seconds since the Unix epoch.
    pub built_unix: u64,
    /// What the build cost (reported again on every reuse).
    pub cost: BuildCost,
    /// Posts indexed in each field, in field order.
    pub field_posts: Vec<u64>,
}

/// One directory of the cache, as [`IndexCache::entries`] lists it.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    /// The directory name (the key, or `.unfinished-…`).
    pub name: String,
    /// The manifest, `None` for an unfinished or damaged entry.
    pub manifest: Option<Manifest>,
    /// Bytes of the files in the directory.
    pub bytes: u64,
    /// Seconds since the directory was last modified.
    pub age_seconds: u64,
}

/// A directory of cached indexes.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct IndexCache {
    dir: PathBuf,
}

impl IndexCache {
    /// The cache in `dir` (created on the first build).
    pub fn new(dir: impl Into<PathBuf>) -> IndexCache {
        IndexCache { dir: dir.into() }
    }

    /// The directory.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// The entry `key` opened for `analyzer` and `posts`, or `None` when
    /// there is no whole entry under that key (no manifest, a manifest of
    /// another key or format, or an index that does not open).
    pub fn open(&self, key: &str, analyzer: &Analyzer, posts: &[Post]) -> Option<ChainIndex> {
        let dir = self.dir.join(key);
        let manifest = read_manifest(&dir)?;
        if manifest.key != key
            || manifest.format != format_tag()
            || manifest.posts != posts.len() as u64
        {
            return None;
        }
        ChainIndex::open_kept(&dir, analyzer, posts, manifest.cost, manifest.field_posts).ok()
    }

    /// Build the entry `key` ([`ChainIndex::build_kept`]) and publish it
    /// (manifest last, then the rename; see the module docs). `tick` is told
    /// of the posts indexed.
    pub fn build(
        &self,
        key: &str,
        corpus_sha256: &str,
        analyzer: &Analyzer,
        posts: &[Post],
        detections: &[Option<Detection>],
        tick: &dyn Fn(u64),
    ) -> Result<ChainIndex> {
        std::fs::create_dir_all(&self.dir).map_err(|e| Error::io(&self.dir, e))?;
        let nanos = SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_nanos());
        let building =
            self.dir.join(format!("{UNFINISHED_PREFIX}{key}-{}-{nanos}", std::process::id()));
        std::fs::create_dir(&building).map_err(|e| Error::io(&building, e))?;
        let published = (|| {
            let index = ChainIndex::build_kept(&building, analyzer, posts, detections, tick)?;
            let manifest = Manifest {
                format: format_tag(),
                key: key.to_string(),
                tool_version: env!("CARGO_PKG_VERSION").to_string(),
                chain: analyzer.name().to_string(),
                corpus_sha256: corpus_sha256.to_string(),
                posts: posts.len() as u64,
                built_unix: SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_secs()),
                cost: index.cost().clone(),
                field_posts: index.field_posts().to_vec(),
            };
            drop(index);
            self.publish(&building, key, &manifest)?;
            ChainIndex::open_kept(
                &self.dir.join(key),
                analyzer,
                posts,
                manifest.cost,
                manifest.field_posts,
            )
        })();
        if published.is_err() {
            // Best effort: an unfinished directory is never read anyway.
            let _ = std::fs::remove_dir_all(&building);
        }
        published
    }

    /// Write `manifest` into `building` (synced), then rename `building` to
    /// the entry `key`.
    fn publish(&self, building: &Path, key: &str, manifest: &Manifest) -> Result<()> {
        let path = building.join(MANIFEST);
        let json = serde_json::to_vec_pretty(manifest)
            .map_err(|e| Error::index(format!("index cache manifest as JSON: {e}")))?;
        let mut file = std::fs::File::create(&path).map_err(|e| Error::io(&path, e))?;
        file.write_all(&json).and_then(|()| file.sync_all()).map_err(|e| Error::io(&path, e))?;
        drop(file);
        let target = self.dir.join(key);
        if std::fs::rename(building, &target).is_err() {
            if read_manifest(&target).is_some() {
                // Another run published the same entry first (a non-empty
                // target cannot be replaced): use it, drop ours.
                let _ = std::fs::remove_dir_all(building);
            } else {
                // A torn directory under the key: replace it.
                let _ = std::fs::remove_dir_all(&target);
                std::fs::rename(building, &target).map_err(|e| Error::io(&target, e))?;
            }
        }
        Ok(())
    }

    /// Every directory of the cache, by name. An absent cache has none.
    pub fn entries(&self) -> Result<Vec<Entry>> {
        let read = match std::fs::read_dir(&self.dir) {
            Ok(read) => read,
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(Vec::new()),
            Err(e) => return Err(Error::io(&self.dir, e)),
        };
        let now = SystemTime::now();
        let mut entries = Vec::new();
        for item in read {
            let item = item.map_err(|e| Error::io(&self.dir, e))?;
            let path = item.path();
            if !path.is_dir() {
                continue;
            }
            let name = item.file_name().to_string_lossy().into_owned();
            let modified = item.metadata().and_then(|m| m.modified()).unwrap_or(now);
            entries.push(Entry {
                manifest: read_manifest(&path).filter(|m| m.key == name),
                bytes: super::dir_size(&path).unwrap_or(0),
                age_seconds: now.duration_since(modified).map_or(0, |d| d.as_secs()),
                name,
            });
        }
        entries.sort_by(|a, b| a.name.cmp(&b.name));
        Ok(entries)
    }

    /// Remove the directory `name` (an entry's key or an unfinished build).
    pub fn remove(&self, name: &str) -> Result<()> {
        if name.is_empty() || name.contains(['/', '\\']) || name == "." || name == ".." {
            return Err(Error::usage(format!("{name:?} is not a cache entry")));
        }
        let path = self.dir.join(name);
        std::fs::remove_dir_all(&path).map_err(|e| Error::io(&path, e))
    }
}

/// The manifest's `format` value.
fn format_tag() -> String {
    format!("postassay index cache v{FORMAT_VERSION}")
}

/// The manifest in `dir`, `None` when absent or unreadable.
fn read_manifest(dir: &Path) -> Option<Manifest> {
    let bytes = std::fs::read(dir.join(MANIFEST)).ok()?;
    serde_json::from_slice(&bytes).ok()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::{builtin_chains, AnalysisContext, Analyzer};
    use crate::ids::PostId;

    fn analyzer(name: &str) -> Analyzer {
        let en = crate::input::LangCode::parse("en").expect("en");
        let spec = builtin_chains(en)
            .expect("built-ins")
            .into_iter()
            .find(|c| c.name.as_str() == name)
            .expect(name);
        Analyzer::build(&spec, &AnalysisContext::default()).expect("builds")
    }

    fn posts() -> Vec<Post> {
        ["harbour ferries closed", "the ferry runs again", "storm over the harbour"]
            .iter()
            .enumerate()
            .map(|(i, t)| Post { id: PostId(format!("p{i}")), text: t.to_string(), lang: None })
            .collect()
    }

    fn parts<'a>(a: &'a Analyzer, definition: &'a str) -> KeyParts<'a> {
        KeyParts {
            tool_version: "1.0.0",
            corpus_sha256: "abc",
            chain_definition: definition,
            analyzer: a,
            detections: &[],
        }
    }

    #[test]
    fn every_part_of_the_key_changes_it() {
        let standard = analyzer("standard");
        let stemmed = analyzer("stemmed");
        let base = key(&parts(&standard, "{}"));
        assert_eq!(base, key(&parts(&standard, "{}")), "same parts, same key");
        let detected = [Some(Detection {
            lang: crate::input::LangCode::parse("en").expect("en"),
            confidence: 0.5,
        })];
        let changed = [
            key(&KeyParts { tool_version: "1.0.1", ..parts(&standard, "{}") }),
            key(&KeyParts { corpus_sha256: "abd", ..parts(&standard, "{}") }),
            key(&parts(&standard, "{\"k\":1}")),
            // Same definition text, different analysis: the fingerprint differs.
            key(&parts(&stemmed, "{}")),
            key(&KeyParts { detections: &detected, ..parts(&standard, "{}") }),
        ];
        for k in &changed {
            assert_ne!(k, &base);
        }
    }

    #[test]
    fn an_entry_is_reused_only_when_whole() {
        let dir = tempfile::tempdir().expect("temp dir");
        let cache = IndexCache::new(dir.path().join("indexes"));
        let a = analyzer("standard");
        let posts = posts();
        assert!(cache.open("k1", &a, &posts).is_none(), "empty cache");
        let built = cache.build("k1", "abc", &a, &posts, &[], &|_| {}).expect("builds");
        let cost = built.cost().clone();
        drop(built);
        let reopened = cache.open("k1", &a, &posts).expect("a whole entry is reused");
        assert_eq!(reopened.cost(), &cost, "the build's cost is reported again");
        assert_eq!(reopened.field_posts(), &[3]);
        drop(reopened);

        // A torn entry: the manifest is missing, or names another key.
        let manifest = cache.dir().join("k1").join(MANIFEST);
        let text = std::fs::read(&manifest).expect("manifest");
        std::fs::remove_file(&manifest).expect("removed");
        assert!(cache.open("k1", &a, &posts).is_none(), "no manifest, no reuse");
        let other = String::from_utf8(text).expect("utf-8").replace("\"k1\"", "\"k2\"");
        std::fs::write(&manifest, other).expect("written");
        assert!(cache.open("k1", &a, &posts).is_none(), "a manifest of another key");

        let entries = cache.entries().expect("lists");
        assert_eq!(entries.len(), 1);
        assert!(entries[0].manifest.is_none());
        assert!(entries[0].bytes > 0);
        cache.remove("k1").expect("removed");
        assert!(cache.entries().expect("lists").is_empty());
        assert!(cache.remove("../x").is_err());
    }
}
