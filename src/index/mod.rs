//! One tantivy index per analysis chain. Third stage of the data flow: takes
//! validated posts (`input`) and a built chain (`analysis`), writes an index in
//! a temporary directory and measures what the chain costs (build time, size
//! on disk, distinct terms, tokens per post).
//!
//! Each post is indexed under a dense ordinal (its position in the corpus) in
//! a fast field, so search maps hits back to [`PostId`]s without stored
//! fields. A routed chain has one text field per language plus a fallback
//! field; every post goes to one of them, chosen by the chain from the
//! post's declared language or the detection made once per post by the
//! caller (and, with `fallback_posts = "all"`, to the fallback field too).
//! Each field's BM25 statistics are its own ([`FieldStatistics`]), as if
//! each field were an index of its own.

pub mod cache;

use std::collections::{BTreeMap, HashSet};
use std::path::{Path, PathBuf};
use std::time::Instant;

use serde::{Deserialize, Serialize};
use tantivy::indexer::NoMergePolicy;
use tantivy::query::Bm25StatisticsProvider;
use tantivy::schema::{
    Field, IndexRecordOption, NumericOptions, Schema, TextFieldIndexing, TextOptions,
};
use tantivy::{Index, IndexReader, IndexWriter, ReloadPolicy, Searcher, TantivyDocument, Term};

use crate::analysis::detect::Detection;
use crate::analysis::Analyzer;
use crate::error::{Error, Result};
use crate::ids::PostId;
use crate::input::Post;

/// Name of the fast field holding a post's ordinal in the corpus.
pub(crate) const ORD_FIELD: &str = "ord";

/// Indexing memory budget of the one writer thread (tantivy needs at least
/// 15 MB per thread).
const WRITER_BUDGET_BYTES: usize = 120_000_000;

/// The index writer every chain index is built with (the chain benchmark's
/// baseline build uses it too, so both have the same settings): one
/// indexing thread and no merging, so the segments, and the order in which
/// BM25 adds up a post's term scores in `f32`, depend only on the corpus.
/// With several threads (or background merges) the layout changed from run
/// to run and with the machine's core count, and identical posts could score
/// a few ulps apart, reordering near-ties and moving the metrics.
pub fn deterministic_writer(index: &Index) -> Result<IndexWriter<TantivyDocument>> {
    let writer = index
        .writer_with_num_threads::<TantivyDocument>(1, WRITER_BUDGET_BYTES)
        .map_err(tantivy_err)?;
    writer.set_merge_policy(Box::new(NoMergePolicy));
    Ok(writer)
}

/// What building one chain's index cost.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct BuildCost {
    /// Wall-clock seconds to analyse and index every post and commit.
    pub build_seconds: f64,
    /// Bytes on disk of the committed index.
    pub index_bytes: u64,
    /// Distinct terms over all text fields.
    pub distinct_terms: u64,
    /// Mean number of tokens the chain produced per post.
    pub mean_tokens_per_post: f64,
    /// Posts indexed under each field key (`text`, or `text_en`, …,
    /// `text_other` for routed chains), in key order.
    pub posts_per_field: BTreeMap<String, u64>,
}

/// Where an index's files live.
enum Home {
    /// A temporary directory, removed when the index is dropped.
    Temporary(tempfile::TempDir),
    /// A directory that outlives the index (an [index cache](cache) entry).
    Kept(PathBuf),
}

impl Home {
    fn path(&self) -> &Path {
        match self {
            Home::Temporary(dir) => dir.path(),
            Home::Kept(path) => path,
        }
    }
}

/// A built index for one chain, in a temporary directory removed when this
/// value is dropped, or in an [index cache](cache) entry.
pub struct ChainIndex {
    index: Index,
    reader: IndexReader,
    fields: Vec<Field>,
    field_posts: Vec<u64>,
    ords: Vec<PostId>,
    cost: BuildCost,
    _home: Home,
}

impl ChainIndex {
    /// Build the index of `posts` with `analyzer` in a temporary directory.
    /// `detections[i]` is the language detected for `posts[i]` (only read by
    /// routed chains; pass an empty slice when the chain is not routed). One
    /// thread indexes, with no merging ([`deterministic_writer`]).
    pub fn build(
        analyzer: &Analyzer,
        posts: &[Post],
        detections: &[Option<Detection>],
    ) -> Result<ChainIndex> {
        Self::build_ticking(analyzer, posts, detections, &|_| {})
    }

    /// [`build`](Self::build) into the empty directory `dir`, which the
    /// index does not remove; `tick(n)` is told of every `n` posts indexed.
    pub fn build_kept(
        dir: &Path,
        analyzer: &Analyzer,
        posts: &[Post],
        detections: &[Option<Detection>],
        tick: &dyn Fn(u64),
    ) -> Result<ChainIndex> {
        Self::build_in(Home::Kept(dir.to_path_buf()), analyzer, posts, detections, tick)
    }

    /// [`build`](Self::build) in a temporary directory, telling `tick` of
    /// the posts indexed.
    pub fn build_ticking(
        analyzer: &Analyzer,
        posts: &[Post],
        detections: &[Option<Detection>],
        tick: &dyn Fn(u64),
    ) -> Result<ChainIndex> {
        let dir = tempfile::Builder::new()
            .prefix("postassay-index-")
            .tempdir()
            .map_err(|e| Error::io(&std::env::temp_dir(), e))?;
        Self::build_in(Home::Temporary(dir), analyzer, posts, detections, tick)
    }

    fn build_in(
        home: Home,
        analyzer: &Analyzer,
        posts: &[Post],
        detections: &[Option<Detection>],
        tick: &dyn Fn(u64),
    ) -> Result<ChainIndex> {
        /// Posts between two ticks.
        const TICK: u64 = 4096;
        let started = Instant::now();
        let (index, fields) = create_index(home.path(), analyzer)?;

        let mut writer = deterministic_writer(&index)?;
        let mut posts_per_field: BTreeMap<String, u64> =
            analyzer.fields().iter().map(|f| (f.key.clone(), 0)).collect();
        let mut field_posts = vec![0u64; fields.len()];
        let ord_field = index.schema().get_field(ORD_FIELD).map_err(tantivy_err)?;
        for (i, post) in posts.iter().enumerate() {
            let detected = detections.get(i).and_then(Option::as_ref);
            let mut doc = TantivyDocument::default();
            doc.add_u64(ord_field, i as u64);
            for slot in analyzer.fields_for_post(post.lang, detected) {
                let (field, fa) = fields
                    .get(slot)
                    .zip(analyzer.fields().get(slot))
                    .ok_or_else(|| Error::index(format!("chain routed a post to field {slot}")))?;
                *posts_per_field.entry(fa.key.clone()).or_default() += 1;
                if let Some(n) = field_posts.get_mut(slot) {
                    *n += 1;
                }
                doc.add_text(*field, &post.text);
            }
            writer.add_document(doc).map_err(tantivy_err)?;
            if (i as u64 + 1).is_multiple_of(TICK) {
                tick(TICK);
            }
        }
        tick(posts.len() as u64 % TICK);
        writer.commit().map_err(tantivy_err)?;
        writer.wait_merging_threads().map_err(tantivy_err)?;
        let build_seconds = started.elapsed().as_secs_f64();

        let reader = open_reader(&index)?;
        let searcher = reader.searcher();
        let distinct_terms = count_distinct_terms(&searcher, &fields)?;
        let total_tokens = count_tokens(&searcher, &fields)?;
        let mean_tokens_per_post =
            if posts.is_empty() { 0.0 } else { total_tokens as f64 / posts.len() as f64 };
        let index_bytes = dir_size(home.path())?;
        Ok(ChainIndex {
            index,
            reader,
            fields,
            field_posts,
            ords: posts.iter().map(|p| p.id.clone()).collect(),
            cost: BuildCost {
                build_seconds,
                index_bytes,
                distinct_terms,
                mean_tokens_per_post,
                posts_per_field,
            },
            _home: home,
        })
    }

    /// Open the index [`build_kept`](Self::build_kept) left in `dir` for
    /// the same `analyzer` and `posts`, with the cost and the posts per field
    /// recorded when it was built. The caller vouches that `dir` holds such
    /// an index (the [cache](cache) checks its key and manifest); a schema
    /// that does not match the analyzer is an error.
    pub fn open_kept(
        dir: &Path,
        analyzer: &Analyzer,
        posts: &[Post],
        cost: BuildCost,
        field_posts: Vec<u64>,
    ) -> Result<ChainIndex> {
        let index = Index::open_in_dir(dir).map_err(tantivy_err)?;
        let schema = index.schema();
        let fields = analyzer
            .fields()
            .iter()
            .map(|fa| schema.get_field(&fa.key).map_err(tantivy_err))
            .collect::<Result<Vec<_>>>()?;
        if fields.len() != field_posts.len() {
            return Err(Error::index(format!(
                "{}: {} fields recorded, the chain has {}",
                dir.display(),
                field_posts.len(),
                fields.len()
            )));
        }
        for fa in analyzer.fields() {
            index.tokenizers().register(&tokenizer_name(analyzer, &fa.key), fa.analyzer.clone());
        }
        let reader = open_reader(&index)?;
        Ok(ChainIndex {
            index,
            reader,
            fields,
            field_posts,
            ords: posts.iter().map(|p| p.id.clone()).collect(),
            cost,
            _home: Home::Kept(dir.to_path_buf()),
        })
    }

    /// Posts indexed in each field, in field order (BM25's N of each field).
    pub fn field_posts(&self) -> &[u64] {
        &self.field_posts
    }

    /// The tantivy index.
    pub fn index(&self) -> &Index {
        &self.index
    }

    /// A reader on the committed index.
    pub fn reader(&self) -> &IndexReader {
        &self.reader
    }

    /// The text field of each of the chain's field analyzers, in the same order.
    pub fn fields(&self) -> &[Field] {
        &self.fields
    }

    /// The BM25 statistics of the field at `slot` (see [`FieldStatistics`]);
    /// `None` when the chain has no such field.
    pub fn statistics<'a>(
        &self,
        searcher: &'a Searcher,
        slot: usize,
    ) -> Option<FieldStatistics<'a>> {
        Some(FieldStatistics {
            searcher,
            field: *self.fields.get(slot)?,
            posts: *self.field_posts.get(slot)?,
        })
    }

    /// The post id at a corpus ordinal.
    pub fn post_id(&self, ord: u64) -> Option<&PostId> {
        usize::try_from(ord).ok().and_then(|i| self.ords.get(i))
    }

    /// What building this index cost.
    pub fn cost(&self) -> &BuildCost {
        &self.cost
    }
}

/// The BM25 statistics of one field of a chain's index, as an index holding
/// only that field's posts would have them: N is the number of posts
/// indexed in the field (not every post of the corpus), the mean field
/// length is the field's tokens over those posts, and document frequencies
/// are the field's own. A plain chain's one field holds every post, so its
/// statistics are the index's. A routed chain's language field then scores
/// exactly as a separate index of that language's posts would (one searcher
/// still serves every field; a query searches one field at a time, see
/// [`crate::search`]).
pub struct FieldStatistics<'a> {
    searcher: &'a Searcher,
    field: Field,
    posts: u64,
}

impl FieldStatistics<'_> {
    /// The field these statistics describe.
    pub fn field(&self) -> Field {
        self.field
    }

    /// Posts indexed in the field (BM25's N).
    pub fn posts(&self) -> u64 {
        self.posts
    }

    /// Tokens indexed in the field over every post.
    pub fn total_tokens(&self) -> Result<u64> {
        Bm25StatisticsProvider::total_num_tokens(self.searcher, self.field).map_err(tantivy_err)
    }

    /// Posts of the field containing `term`.
    pub fn posts_with(&self, term: &Term) -> Result<u64> {
        self.searcher.doc_freq(term).map_err(tantivy_err)
    }
}

impl Bm25StatisticsProvider for FieldStatistics<'_> {
    fn total_num_tokens(&self, field: Field) -> tantivy::Result<u64> {
        debug_assert_eq!(field, self.field, "one field's statistics asked for another's");
        Bm25StatisticsProvider::total_num_tokens(self.searcher, field)
    }

    fn total_num_docs(&self) -> tantivy::Result<u64> {
        Ok(self.posts)
    }

    fn doc_freq(&self, term: &Term) -> tantivy::Result<u64> {
        self.searcher.doc_freq(term)
    }
}

/// A new index in `dir` with the ordinal field and one text field per field
/// of `analyzer`, whose tokenizers are registered.
fn create_index(dir: &Path, analyzer: &Analyzer) -> Result<(Index, Vec<Field>)> {
    let mut builder = Schema::builder();
    builder.add_u64_field(ORD_FIELD, NumericOptions::default().set_fast());
    let mut fields = Vec::with_capacity(analyzer.fields().len());
    for fa in analyzer.fields() {
        let indexing = TextFieldIndexing::default()
            .set_tokenizer(&tokenizer_name(analyzer, &fa.key))
            .set_index_option(IndexRecordOption::WithFreqsAndPositions);
        let options = TextOptions::default().set_indexing_options(indexing);
        fields.push(builder.add_text_field(&fa.key, options));
    }
    let index = Index::create_in_dir(dir, builder.build()).map_err(tantivy_err)?;
    for fa in analyzer.fields() {
        index.tokenizers().register(&tokenizer_name(analyzer, &fa.key), fa.analyzer.clone());
    }
    Ok((index, fields))
}

/// A reader that never reloads (the index is complete when opened).
fn open_reader(index: &Index) -> Result<IndexReader> {
    index.reader_builder().reload_policy(ReloadPolicy::Manual).try_into().map_err(tantivy_err)
}

fn tokenizer_name(analyzer: &Analyzer, key: &str) -> String {
    format!("{}/{}", analyzer.name(), key)
}

/// Convert a tantivy error into ours.
pub(crate) fn tantivy_err(e: tantivy::TantivyError) -> Error {
    Error::index(e.to_string())
}

/// Distinct terms over every text field and segment (a term is counted once
/// per field: routed chains keep languages apart on purpose).
fn count_distinct_terms(searcher: &tantivy::Searcher, fields: &[Field]) -> Result<u64> {
    let mut total = 0u64;
    for &field in fields {
        if searcher.segment_readers().len() == 1 {
            let inv = searcher.segment_reader(0).inverted_index(field).map_err(tantivy_err)?;
            total += inv.terms().num_terms() as u64;
            continue;
        }
        let mut seen: HashSet<Vec<u8>> = HashSet::new();
        for seg in searcher.segment_readers() {
            let inv = seg.inverted_index(field).map_err(tantivy_err)?;
            let mut stream =
                inv.terms().stream().map_err(|e| Error::index(format!("term stream: {e}")))?;
            while stream.advance() {
                if !seen.contains(stream.key()) {
                    seen.insert(stream.key().to_vec());
                }
            }
        }
        total += seen.len() as u64;
    }
    Ok(total)
}

/// Tokens the chain produced over the corpus, as the index recorded them
/// while indexing (the BM25 length statistics), so the corpus is not
/// analysed a second time.
fn count_tokens(searcher: &tantivy::Searcher, fields: &[Field]) -> Result<u64> {
    let mut total = 0;
    for seg in searcher.segment_readers() {
        for &field in fields {
            total += seg.inverted_index(field).map_err(tantivy_err)?.total_num_tokens();
        }
    }
    Ok(total)
}

fn dir_size(path: &Path) -> Result<u64> {
    let mut total = 0;
    for entry in std::fs::read_dir(path).map_err(|e| Error::io(path, e))? {
        let entry = entry.map_err(|e| Error::io(path, e))?;
        let meta = entry.metadata().map_err(|e| Error::io(&entry.path(), e))?;
        if meta.is_file() {
            total += meta.len();
        }
    }
    Ok(total)
}
