//! Orchestration of whole commands: `run` (read inputs → build one index per
//! chain → search → evaluate → compare → report model) and `score` (read runs
//! → evaluate → compare → report model). Every input is read and validated
//! before any index is built or any output written.
//!
//! Language detection runs once per post (and once per query) for each
//! distinct detector configuration, never once per chain.
//!
//! With [`RunPlan::diagnostics`] (`run --vet`), `run` also diagnoses its
//! chains on open linguistic data through [`crate::diagnose`] (a sibling on
//! top of `analysis`), after the inputs are read and before any index is
//! built, and stores the result in the report model.

pub mod compare;
pub mod detect_cache;
pub mod explain;
pub mod moved;

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Instant;

use self::detect_cache::DetectCache;
use crate::analysis::detect::{Detection, LangDetector};
use crate::analysis::hashtag::WordFreqs;
use crate::analysis::{AnalysisContext, Analyzer, ChainSpec};
use crate::diagnose::{self, ChainUnderTest, DiagnosePlan, Diagnostics, FreqSource, Sections};
use crate::error::{Error, Result};
use crate::eval::{self, EvalSettings, Gain, Metric, SystemScores};
use crate::ids::{ChainName, QueryId};
use crate::index::cache::{self as index_cache, IndexCache};
use crate::index::{BuildCost, ChainIndex};
use crate::input::{self, Judgments, LangCode, Post, Query, Run};
use crate::progress::Progress;
use crate::report::model::{
    Basis, ChainTiming, Cost, Counts, Coverage, InputFile, PerQuery, QueryValues, Report,
    RoutingInfo, Settings, SystemInfo, Timing, ToolInfo, SCHEMA_VERSION,
};
use crate::search;
use crate::stats::StatSettings;

/// Settings shared by `run` and `score`.
#[derive(Debug, Clone)]
pub struct EvalOptions {
    /// Metrics in output order.
    pub metrics: Vec<Metric>,
    /// Threshold, gain and gmax.
    pub eval: EvalSettings,
    /// Seeds, resamples, α.
    pub stats: StatSettings,
    /// The system others are compared with (default: the first).
    pub baseline: Option<ChainName>,
    /// Worker threads (≥ 1) for building, searching and the statistics.
    /// Outputs never depend on it.
    pub threads: usize,
}

/// What `postassay run` does.
#[derive(Debug, Clone)]
pub struct RunPlan {
    /// Corpus file.
    pub corpus: PathBuf,
    /// Queries file.
    pub queries: PathBuf,
    /// Judgments file.
    pub judgments: PathBuf,
    /// Chain file the chains came from, if any (hashed into the report).
    pub chain_file: Option<PathBuf>,
    /// Chains to compare, in report order.
    pub chains: Vec<ChainSpec>,
    /// Results kept per query.
    pub depth: usize,
    /// Leave post texts out of the reports (ids only).
    pub redact: bool,
    /// Evaluation settings.
    pub options: EvalOptions,
    /// Diagnose the chains on open data too (`run --vet`).
    pub diagnostics: Option<RunDiagnostics>,
    /// Cache directory of language detections (`detections/`) and chain
    /// indexes (`indexes/`); `None` caches nothing. See
    /// [`detect_cache::cache_root_from_env`].
    pub cache: Option<PathBuf>,
}

/// How `run --vet` diagnoses the chains it runs: every section
/// (conflation, routing, segmentation) on the chains exactly as indexed,
/// with the run's own corpus as the segmenter's word-frequency source.
#[derive(Debug, Clone)]
pub struct RunDiagnostics {
    /// The open-data directory (layout in [`crate::diagnose::data`]).
    pub data: PathBuf,
    /// Worst offenders and misses kept per result.
    pub top: usize,
}

/// What `postassay score` does.
#[derive(Debug, Clone)]
pub struct ScorePlan {
    /// Judgments file.
    pub judgments: PathBuf,
    /// Optional queries file, for breakdowns by language and tag.
    pub queries: Option<PathBuf>,
    /// Named run files in report order.
    pub runs: Vec<(ChainName, PathBuf)>,
    /// Evaluation settings.
    pub options: EvalOptions,
}

/// A computed report and the runs it rests on.
#[derive(Debug, Clone)]
pub struct BenchOutput {
    /// The report model.
    pub report: Report,
    /// Each system's run (written to `runs/` by `run`).
    pub runs: Vec<(ChainName, Run)>,
}

/// Run the bench: index the corpus once per chain, search, evaluate, compare.
/// `progress` shows each step (the CLI draws it on stderr).
pub fn run(plan: &RunPlan, progress: &Progress) -> Result<BenchOutput> {
    let started = Instant::now();
    if plan.chains.is_empty() {
        return Err(Error::usage("no chain to run"));
    }
    let names: Vec<ChainName> = plan.chains.iter().map(|c| c.name.clone()).collect();
    let baseline = baseline_index(&names, plan.options.baseline.as_ref())?;
    let (judgments, mut warnings) = input::read_judgments(&plan.judgments)?;
    let queries = input::read_queries(&plan.queries)?;
    let corpus_bytes = std::fs::metadata(&plan.corpus).map_or(0, |m| m.len());
    let reading = progress.step("reading the corpus", corpus_bytes, "bytes");
    let read_so_far = std::cell::Cell::new(0u64);
    let posts = input::read_corpus_metered(&plan.corpus, &|bytes| {
        reading.advance(bytes.saturating_sub(read_so_far.replace(bytes)));
    })?;
    drop(reading);
    crate::pause::point("reading");
    check_settings(&plan.judgments, &judgments, &plan.options.eval)?;
    progress.line(&format!(
        "read {} posts, {} queries, {} judgments in {:.2} s",
        posts.len(),
        queries.len(),
        judgments.len(),
        started.elapsed().as_secs_f64()
    ));
    let mut line = |l: &str| progress.line(l);
    let diagnostics = match &plan.diagnostics {
        Some(settings) => Some(diagnose_chains(plan, settings, &mut line)?),
        None => None,
    };

    let corpus_input = hash_input("corpus", &plan.corpus)?;
    let analyzers = build_analyzers(&plan.chains, &posts)?;
    let detect_cache = plan.cache.as_ref().map(|root| DetectCache::new(root.join("detections")));
    let detections = Detections::compute(
        &analyzers,
        &posts,
        &queries,
        detect_cache.as_ref(),
        plan.options.threads,
        progress,
    );
    let index_cache = plan.cache.as_ref().map(|root| IndexCache::new(root.join("indexes")));
    let built = build_and_search(&ChainWork {
        analyzers: &analyzers,
        chains: &plan.chains,
        posts: &posts,
        queries: &queries,
        detections: &detections,
        corpus_sha256: &corpus_input.sha256,
        depth: plan.depth,
        threads: plan.options.threads,
        cache: index_cache.as_ref(),
        progress,
    })?;

    let mut runs = Vec::new();
    let mut infos = Vec::new();
    let mut timings = Vec::new();
    for (analyzer, chain) in analyzers.iter().zip(built) {
        let (post_det, query_det) = detections.for_analyzer(analyzer);
        timings.push(chain.timing);
        infos.push(SystemInfo {
            name: analyzer.name().clone(),
            cost: Some(Cost::from(&chain.cost)),
            routing: routing_info(analyzer, &posts, post_det, &queries, query_det),
            coverage: Coverage::default(),
        });
        runs.push((analyzer.name().clone(), chain.run));
    }

    // Judged queries missing from the query file cannot be run: they are left
    // out of the population (rather than scored 0) and named in a warning.
    let mut population = eval::query_population(&judgments, &plan.options.eval);
    let missing = evaluated_not_in(&population, &queries);
    if !missing.is_empty() {
        warnings.push(format!(
            "{}: {} not in the query file and {} not evaluated: {}",
            plan.judgments.display(),
            crate::plural::counted(missing.len(), "judged query is", "judged queries are"),
            if missing.len() == 1 { "was" } else { "were" },
            abbreviate(&missing)
        ));
        // Both lists are in byte order of the ids.
        population
            .evaluated
            .retain(|q| missing.binary_search_by(|m| m.as_str().cmp(q.as_str())).is_err());
    }

    let mut inputs = vec![
        corpus_input,
        hash_input("queries", &plan.queries)?,
        hash_input("judgments", &plan.judgments)?,
    ];
    if let Some(f) = &plan.chain_file {
        inputs.push(hash_input("chains", f)?);
    }
    let chains_json = plan
        .chains
        .iter()
        .map(|c| serde_json::to_value(c).map_err(|e| Error::usage(format!("chain as JSON: {e}"))))
        .collect::<Result<Vec<_>>>()?;
    let assembled = Assembly {
        command: "run",
        inputs,
        judgments: &judgments,
        queries: Some(&queries),
        posts: Some(posts.len()),
        population,
        runs,
        infos,
        baseline,
        depth: Some(plan.depth),
        chains: chains_json,
        warnings,
    };
    let mut out = assembled.finish(&plan.options, progress)?;
    let chain_runs = analyzers
        .iter()
        .zip(&out.runs)
        .map(|(analyzer, (_, run))| {
            let (post_detections, query_detections) = detections.for_analyzer(analyzer);
            moved::ChainRun { analyzer, run, post_detections, query_detections }
        })
        .collect();
    // The moved queries are picked on the report's headline metric: the
    // first of --metrics that measures quality (not `unjudged@k`), the rule
    // of `report::text::headline`.
    let headline_index =
        plan.options.metrics.iter().position(|m| !m.is_diagnostic()).unwrap_or_default();
    let headline = out
        .report
        .per_query
        .iter()
        .map(|s| {
            s.queries
                .iter()
                .filter_map(|q| q.values.get(headline_index).map(|v| (q.query_id.clone(), *v)))
                .collect()
        })
        .collect();
    out.report.moved = moved::moved_queries(&moved::MovedInputs {
        chains: chain_runs,
        baseline,
        headline,
        queries: &queries,
        posts: &posts,
        judgments: &judgments,
        relevant_from: plan.options.eval.relevant_from,
        redact: plan.redact,
    });
    out.report.settings.redact = plan.redact;
    out.report.diagnostics = diagnostics;
    out.report.timing = Timing { total_seconds: started.elapsed().as_secs_f64(), chains: timings };
    announce_warnings(&out.report, progress);
    Ok(out)
}

/// What [`build_and_search`] works on.
struct ChainWork<'a> {
    analyzers: &'a [Analyzer],
    chains: &'a [ChainSpec],
    posts: &'a [Post],
    queries: &'a [Query],
    detections: &'a Detections,
    corpus_sha256: &'a str,
    depth: usize,
    threads: usize,
    cache: Option<&'a IndexCache>,
    progress: &'a Progress,
}

/// One chain's index cost, run and timing.
struct ChainDone {
    cost: BuildCost,
    run: Run,
    timing: ChainTiming,
}

/// Build (or read from the cache) and search every chain, `work.threads`
/// chains at a time; results in chain order. Each index is still built by
/// one writer thread ([`crate::index::deterministic_writer`]), so no output
/// depends on the thread count. The first failing chain, in chain order,
/// gives the error.
fn build_and_search(work: &ChainWork<'_>) -> Result<Vec<ChainDone>> {
    // Once a chain fails, chains not yet begun are skipped (`None`); the
    // failure is among the results, so the first error in chain order
    // comes out.
    let failed = AtomicBool::new(false);
    let results = crate::parallel::map_indexed(work.analyzers.len(), work.threads, |i| {
        if failed.load(Ordering::Relaxed) {
            return None;
        }
        let result = one_chain(work, i);
        if result.is_err() {
            failed.store(true, Ordering::Relaxed);
        }
        Some(result)
    });
    results.into_iter().flatten().collect()
}

/// Build (or read from the cache) and search chain `i` of `work`.
fn one_chain(work: &ChainWork<'_>, i: usize) -> Result<ChainDone> {
    let (Some(analyzer), Some(spec)) = (work.analyzers.get(i), work.chains.get(i)) else {
        return Err(Error::index(format!("no chain {i}")));
    };
    let progress = work.progress;
    let name = analyzer.name();
    let (post_det, query_det) = work.detections.for_analyzer(analyzer);
    let started = Instant::now();
    let building =
        progress.step(&format!("chain {name}: indexing"), work.posts.len() as u64, "posts");
    let tick = |n| building.advance(n);
    let (index, from_cache) = match work.cache {
        None => (ChainIndex::build_ticking(analyzer, work.posts, post_det, &tick)?, false),
        Some(cache) => {
            let definition = serde_json::to_string(spec)
                .map_err(|e| Error::usage(format!("chain as JSON: {e}")))?;
            let key = index_cache::key(&index_cache::KeyParts {
                tool_version: env!("CARGO_PKG_VERSION"),
                corpus_sha256: work.corpus_sha256,
                chain_definition: &definition,
                analyzer,
                detections: post_det,
            });
            match cache.open(&key, analyzer, work.posts) {
                Some(index) => (index, true),
                None => match cache.build(
                    &key,
                    work.corpus_sha256,
                    analyzer,
                    work.posts,
                    post_det,
                    &tick,
                ) {
                    Ok(index) => (index, false),
                    Err(e) => {
                        progress.line(&format!(
                            "warning: chain {name}: could not keep the index in the cache ({e}); \
                             building it in a temporary directory"
                        ));
                        (ChainIndex::build_ticking(analyzer, work.posts, post_det, &tick)?, false)
                    }
                },
            }
        }
    };
    crate::pause::point("building");
    let seconds = started.elapsed().as_secs_f64();
    let cost = index.cost().clone();
    building.finish(
        progress,
        &format!(
            "chain {name}: {} in {seconds:.2} s, {} distinct terms",
            if from_cache { "index read from the cache" } else { "indexed" },
            cost.distinct_terms
        ),
    );
    let searching =
        progress.step(&format!("chain {name}: searching"), work.queries.len() as u64, "queries");
    let outcome = search::search_chain_ticking(
        &index,
        analyzer,
        work.queries,
        query_det,
        work.depth,
        &|n| searching.advance(n),
    )?;
    let seconds = searching.seconds();
    searching.finish(
        progress,
        &format!("chain {name}: searched {} queries in {seconds:.2} s", work.queries.len()),
    );
    let (mean_ms, p95_ms) = latency_summary(&outcome.latencies_ms);
    let build_seconds = cost.build_seconds;
    Ok(ChainDone {
        cost,
        run: outcome.run,
        timing: ChainTiming {
            name: name.clone(),
            // A cached index reports the build time measured when it was
            // built, so chains stay comparable whatever the cache held.
            build_seconds,
            from_cache,
            query_ms_mean: mean_ms,
            query_ms_p95: p95_ms,
        },
    })
}

/// The diagnostics of `run --vet`: the run's chains as indexed (the
/// built-in `stemmed` keeps the run's one stemming language, unlike `vet`,
/// which gives each language its own), every section, word frequencies
/// learned from the run's corpus as `run` learns them.
fn diagnose_chains(
    plan: &RunPlan,
    settings: &RunDiagnostics,
    progress: &mut dyn FnMut(&str),
) -> Result<Diagnostics> {
    let diagnose_plan = DiagnosePlan {
        data: settings.data.clone(),
        chains: plan.chains.iter().cloned().map(ChainUnderTest::Fixed).collect(),
        sections: Sections::all(),
        languages: None,
        freq_sources: vec![FreqSource::Corpus(plan.corpus.clone())],
        // The chain file is already among the report's inputs.
        chain_file: None,
        top: settings.top,
    };
    diagnose::run(&diagnose_plan, progress)
}

/// Score existing runs against judgments. `progress` receives the report's
/// warnings (the CLI prints them on stderr).
pub fn score(plan: &ScorePlan, progress: &Progress) -> Result<BenchOutput> {
    let started = Instant::now();
    if plan.runs.is_empty() {
        return Err(Error::usage("give at least one --run NAME=FILE"));
    }
    let names: Vec<ChainName> = plan.runs.iter().map(|(n, _)| n.clone()).collect();
    let baseline = baseline_index(&names, plan.options.baseline.as_ref())?;
    let (judgments, mut warnings) = input::read_judgments(&plan.judgments)?;
    let queries = plan.queries.as_deref().map(input::read_queries).transpose()?;
    let mut runs = Vec::new();
    for (name, path) in &plan.runs {
        runs.push((name.clone(), input::read_run(path)?));
    }
    check_settings(&plan.judgments, &judgments, &plan.options.eval)?;
    let mut inputs = vec![hash_input("judgments", &plan.judgments)?];
    if let Some(q) = &plan.queries {
        inputs.push(hash_input("queries", q)?);
    }
    for (name, path) in &plan.runs {
        inputs.push(hash_input(&format!("run:{name}"), path)?);
    }
    let population = eval::query_population(&judgments, &plan.options.eval);
    if let (Some(path), Some(qs)) = (&plan.queries, &queries) {
        // Breakdowns read each query's language and tags from the queries
        // file; an evaluated query it lacks still counts everywhere else but
        // lands in the `(none)` language cell with no tag, so say how many.
        let missing = evaluated_not_in(&population, qs);
        if !missing.is_empty() {
            warnings.push(format!(
                "{}: {} of the {} evaluated queries {} not in the queries file; they are scored \
                 and tested but fall under language \"(none)\" with no tag in the breakdowns: {}",
                path.display(),
                missing.len(),
                population.evaluated.len(),
                if missing.len() == 1 { "is" } else { "are" },
                abbreviate(&missing)
            ));
        }
    }
    let infos = names
        .iter()
        .map(|n| SystemInfo {
            name: n.clone(),
            cost: None,
            routing: None,
            coverage: Coverage::default(),
        })
        .collect();
    let assembled = Assembly {
        command: "score",
        inputs,
        judgments: &judgments,
        queries: queries.as_deref(),
        posts: None,
        population,
        runs,
        infos,
        baseline,
        depth: None,
        chains: Vec::new(),
        warnings,
    };
    let mut out = assembled.finish(&plan.options, progress)?;
    out.report.timing.total_seconds = started.elapsed().as_secs_f64();
    announce_warnings(&out.report, progress);
    Ok(out)
}

/// Check the evaluation settings against the judgments read from `path`
/// ([`eval::validate_settings`]); a refusal names the file.
fn check_settings(path: &Path, judgments: &Judgments, settings: &EvalSettings) -> Result<()> {
    eval::validate_settings(judgments, settings).map_err(|e| Error::in_file(path, e.to_string()))
}

/// The evaluated queries that `queries` lacks, in the population's (byte)
/// order of ids.
fn evaluated_not_in(population: &eval::QueryPopulation, queries: &[Query]) -> Vec<String> {
    let in_file: BTreeSet<&QueryId> = queries.iter().map(|q| &q.id).collect();
    population.evaluated.iter().filter(|q| !in_file.contains(q)).map(ToString::to_string).collect()
}

/// Hand each warning of the finished report to `progress` as one line
/// `warning: …`, so whatever was collected into the report (from the input
/// readers, the population, the evaluation) is also seen on stderr, unless
/// the CLI's `--quiet` silences progress. The report keeps them unchanged.
fn announce_warnings(report: &Report, progress: &Progress) {
    for w in &report.warnings {
        progress.line(&format!("warning: {}", w.replace('\n', " ")));
    }
}

/// What a routed chain did with the posts and queries (`None` for a plain
/// chain): its settings in words, posts per branch (each post counted once,
/// in its own field) and the queries whose language has no branch.
fn routing_info(
    analyzer: &Analyzer,
    posts: &[Post],
    post_det: &[Option<Detection>],
    queries: &[Query],
    query_det: &[Option<Detection>],
) -> Option<RoutingInfo> {
    let route = analyzer.spec().route()?;
    let label = |slot: usize| {
        analyzer
            .fields()
            .get(slot)
            .and_then(|f| f.language)
            .map_or_else(|| "fallback".to_string(), |l| l.to_string())
    };
    let mut posts_per_branch: BTreeMap<String, u64> = route
        .languages
        .iter()
        .map(|l| (l.to_string(), 0))
        .chain([("fallback".to_string(), 0)])
        .collect();
    for (i, post) in posts.iter().enumerate() {
        let slot = analyzer.field_for_post(post.lang, post_det.get(i).and_then(Option::as_ref));
        *posts_per_branch.entry(label(slot)).or_default() += 1;
    }
    let fallback = route.branches.len();
    let queries_without_branch = queries
        .iter()
        .enumerate()
        .filter(|(i, q)| {
            analyzer.field_for_query(q.lang, query_det.get(*i).and_then(Option::as_ref)) == fallback
        })
        .count();
    let detector = match analyzer.detector() {
        Some(d) => format!(
            "{}, {} languages routed (others to the fallback), confidence ≥ {}",
            d.kind(),
            d.languages().map_or(0, <[_]>::len),
            d.min_confidence()
        ),
        None => "none".to_string(),
    };
    Some(RoutingInfo {
        detector,
        posts: route.posts.as_str().to_string(),
        queries: route.queries.as_str().to_string(),
        search: route.search.as_str().to_string(),
        fusion: route.fusion.as_str().to_string(),
        fallback_posts: route.fallback_posts.as_str().to_string(),
        posts_per_branch,
        queries_run: queries.len(),
        queries_without_branch,
    })
}

/// Build every chain, learning the hashtag word frequencies from the posts
/// once when any chain needs them (shared by all chains).
fn build_analyzers(chains: &[ChainSpec], posts: &[Post]) -> Result<Vec<Analyzer>> {
    let ctx = AnalysisContext {
        word_freqs: chains
            .iter()
            .any(ChainSpec::needs_word_freqs)
            .then(|| std::sync::Arc::new(WordFreqs::learn(posts.iter().map(|p| p.text.as_str())))),
    };
    chains.iter().map(|c| Analyzer::build(c, &ctx)).collect()
}

/// Position of the baseline among the systems (the first by default).
fn baseline_index(names: &[ChainName], wanted: Option<&ChainName>) -> Result<usize> {
    let mut seen = BTreeSet::new();
    for n in names {
        if !seen.insert(n) {
            return Err(Error::usage(format!("the name {n:?} is given twice")));
        }
    }
    match wanted {
        None => Ok(0),
        Some(w) => names.iter().position(|n| n == w).ok_or_else(|| {
            let list: Vec<&str> = names.iter().map(ChainName::as_str).collect();
            Error::usage(format!(
                "--baseline {w:?} is not one of the systems ({})",
                list.join(", ")
            ))
        }),
    }
}

/// Everything needed to turn runs into a report.
struct Assembly<'a> {
    command: &'static str,
    inputs: Vec<InputFile>,
    judgments: &'a Judgments,
    queries: Option<&'a [Query]>,
    posts: Option<usize>,
    population: eval::QueryPopulation,
    runs: Vec<(ChainName, Run)>,
    infos: Vec<SystemInfo>,
    baseline: usize,
    depth: Option<usize>,
    chains: Vec<serde_json::Value>,
    warnings: Vec<String>,
}

impl Assembly<'_> {
    fn finish(self, options: &EvalOptions, progress: &Progress) -> Result<BenchOutput> {
        let mut warnings = self.warnings;
        let mut infos = self.infos;
        // An evaluated query a system has no result for scores 0
        // (metrics.md); say so per system, since a run file that answers 4 of
        // 26 queries otherwise reads as a much worse system.
        let kind = if self.command == "run" { "chain" } else { "run" };
        for ((name, run), info) in self.runs.iter().zip(infos.iter_mut()) {
            info.coverage = coverage(run, &self.population.evaluated);
            warnings.extend(info.coverage.describe(kind, name.as_str()));
        }
        let mut scores: Vec<(ChainName, SystemScores)> = Vec::new();
        for (name, run) in &self.runs {
            let s = eval::evaluate(
                run,
                self.judgments,
                &self.population,
                &options.metrics,
                &options.eval,
            )?;
            warnings.extend(s.warnings.iter().map(|w| format!("{name}: {w}")));
            scores.push((name.clone(), s));
        }
        if self.population.evaluated.len() < 2 {
            warnings.push(format!(
                "only {}: significance tests need at least 2, p-values are left empty",
                crate::plural::counted(
                    self.population.evaluated.len(),
                    "evaluated query",
                    "evaluated queries"
                )
            ));
        }
        let refs: Vec<(ChainName, &SystemScores)> =
            scores.iter().map(|(n, s)| (n.clone(), s)).collect();
        let stats = StatSettings { threads: options.threads, ..options.stats };
        let computed = compare::compare(
            &refs,
            self.baseline,
            &options.metrics,
            self.queries,
            &stats,
            progress,
        );
        let per_query = scores
            .iter()
            .map(|(name, s)| PerQuery {
                system: name.clone(),
                queries: s
                    .per_query
                    .iter()
                    .map(|(q, v)| QueryValues { query_id: q.clone(), values: v.clone() })
                    .collect(),
            })
            .collect();
        let baseline_name = self
            .runs
            .get(self.baseline)
            .map(|(n, _)| n.clone())
            .ok_or_else(|| Error::usage("no baseline system"))?;
        let report = Report {
            schema_version: SCHEMA_VERSION,
            tool: ToolInfo {
                name: "postassay".to_string(),
                version: env!("CARGO_PKG_VERSION").to_string(),
            },
            command: self.command.to_string(),
            inputs: self.inputs,
            basis: Some(basis(self.judgments, self.queries)?),
            settings: Settings {
                metrics: options.metrics.iter().map(Metric::key).collect(),
                relevant_from: options.eval.relevant_from,
                gain: match options.eval.gain {
                    Gain::Exponential => "exp".to_string(),
                    Gain::Linear => "linear".to_string(),
                },
                max_grade: options.eval.max_grade.unwrap_or_else(|| self.judgments.max_grade()),
                baseline: baseline_name,
                seed: options.stats.seed,
                permutations: options.stats.permutations,
                bootstrap_resamples: options.stats.bootstrap_resamples,
                alpha: options.stats.alpha,
                depth: self.depth,
                redact: false,
                chains: self.chains,
            },
            counts: Counts {
                posts: self.posts,
                queries: self.queries.map(<[Query]>::len),
                queries_evaluated: self.population.evaluated.len(),
                queries_skipped: self.population.skipped.len(),
                judgments: self.judgments.len(),
            },
            systems: infos,
            summary: computed.summaries,
            per_query,
            comparisons: computed.comparisons,
            breakdowns: computed.breakdowns,
            skipped_queries: self.population.skipped.clone(),
            moved: Vec::new(),
            diagnostics: None,
            warnings,
            timing: Timing::default(),
        };
        Ok(BenchOutput { report, runs: self.runs })
    }
}

/// What the judgments and queries say, whatever their files' bytes
/// ([`Basis`]): a canonical text of one JSON array per judgment and per
/// query, in byte order of the ids (tags sorted), hashed.
fn basis(judgments: &Judgments, queries: Option<&[Query]>) -> Result<Basis> {
    let mut canonical = String::new();
    for (q, posts) in judgments.queries() {
        for (p, g) in posts {
            canonical.push_str(&json_line(&(q, p, g))?);
        }
    }
    let judged = judgments.queries().map(|(q, posts)| (q.clone(), posts.clone())).collect();
    let mut by_id: BTreeMap<&QueryId, String> = BTreeMap::new();
    for q in queries.unwrap_or_default() {
        let mut tags: Vec<&str> = q.tags.iter().map(String::as_str).collect();
        tags.sort_unstable();
        by_id.insert(
            &q.id,
            json_line(&(&q.id, &q.text, q.lang.as_ref().map(LangCode::as_str), tags))?,
        );
    }
    let queries_sha256 = queries.map(|_| {
        input::sha256_hex(by_id.values().map(String::as_str).collect::<String>().as_bytes())
    });
    Ok(Basis {
        judgments_sha256: input::sha256_hex(canonical.as_bytes()),
        queries_sha256,
        judgments: judged,
        queries: by_id
            .into_iter()
            .map(|(id, line)| {
                let hash = input::sha256_hex(line.as_bytes());
                (id.clone(), hash.get(..16).unwrap_or(&hash).to_string())
            })
            .collect(),
    })
}

/// `value` as one line of JSON, with its line end.
fn json_line<T: serde::Serialize>(value: &T) -> Result<String> {
    serde_json::to_string(value)
        .map(|line| line + "\n")
        .map_err(|e| Error::usage(format!("writing the inputs' canonical text: {e}")))
}

/// Which of the `evaluated` queries `run` returned at least one post for.
fn coverage(run: &Run, evaluated: &[QueryId]) -> Coverage {
    let unanswered: Vec<QueryId> = evaluated
        .iter()
        .filter(|q| run.by_query.get(*q).is_none_or(Vec::is_empty))
        .cloned()
        .collect();
    Coverage {
        evaluated: evaluated.len(),
        answered: evaluated.len() - unanswered.len(),
        unanswered,
    }
}

/// One detector's results: posts, then queries, in input order (`None`
/// where the text declared its language or nothing was detected).
type DetectedLangs = (Vec<Option<Detection>>, Vec<Option<Detection>>);

/// Detections of posts and queries, one set per distinct detector.
struct Detections {
    /// Keyed by the detector's configuration.
    by_detector: BTreeMap<String, DetectedLangs>,
}

/// How [`Detections::compute_with`] detects a list of texts.
type DetectFn<'a> = &'a dyn Fn(&LangDetector, &[&str]) -> Vec<Option<Detection>>;

impl Detections {
    fn key(d: &LangDetector) -> String {
        format!("{d:?}")
    }

    /// Detect with each distinct detector on `threads` threads, reusing
    /// `cache` when given.
    fn compute(
        analyzers: &[Analyzer],
        posts: &[Post],
        queries: &[Query],
        cache: Option<&DetectCache>,
        threads: usize,
        progress: &Progress,
    ) -> Detections {
        let detectors: BTreeSet<String> =
            analyzers.iter().filter_map(Analyzer::detector).map(Self::key).collect();
        if detectors.is_empty() {
            return Detections { by_detector: BTreeMap::new() };
        }
        let texts = (posts.len() + queries.len()) * detectors.len();
        let step = progress.step("detecting languages", texts as u64, "texts");
        let mut line = |l: &str| progress.line(l);
        Self::compute_with(
            analyzers,
            posts,
            queries,
            cache,
            &|d, texts| d.detect_all_with(texts, threads, &|n| step.advance(n)).0,
            &mut line,
        )
    }

    /// [`compute`](Self::compute) with an explicit cache and detection.
    fn compute_with(
        analyzers: &[Analyzer],
        posts: &[Post],
        queries: &[Query],
        cache: Option<&DetectCache>,
        detect: DetectFn<'_>,
        progress: &mut dyn FnMut(&str),
    ) -> Detections {
        let mut by_detector = BTreeMap::new();
        for a in analyzers {
            let Some(d) = a.detector() else { continue };
            let key = Self::key(d);
            if by_detector.contains_key(&key) {
                continue;
            }
            let started = Instant::now();
            // A declared language wins, so only undeclared texts are
            // detected, unless a chain with this detector routes by
            // detection alone (`detected` mode), which needs every text.
            let sharing =
                || analyzers.iter().filter(|o| o.detector().map(Self::key) == Some(key.clone()));
            let all_posts = sharing().any(Analyzer::detects_declared_posts);
            let all_queries = sharing().any(Analyzer::detects_declared_queries);
            let post_texts: Vec<&str> = posts
                .iter()
                .map(|p| if p.lang.is_some() && !all_posts { "" } else { p.text.as_str() })
                .collect();
            let query_texts: Vec<&str> = queries
                .iter()
                .map(|q| if q.lang.is_some() && !all_queries { "" } else { q.text.as_str() })
                .collect();
            let mut from_cache = false;
            let mut lookup = |texts: &[&str]| match cache {
                Some(c) => {
                    let got = c.get_or_detect(d, texts, |t| detect(d, t));
                    if let Some(e) = &got.write_error {
                        progress(&format!("could not write the detection cache: {e}"));
                    }
                    from_cache |= got.from_cache;
                    got.detections
                }
                None => detect(d, texts),
            };
            let post_det = lookup(&post_texts);
            let query_det = lookup(&query_texts);
            let detected = post_texts.iter().filter(|t| !t.is_empty()).count();
            let seconds = started.elapsed().as_secs_f64();
            progress(&match (from_cache, cache) {
                (true, Some(c)) => format!(
                    "read the language detections of {detected} posts from the cache {} in {seconds:.2} s",
                    c.dir().display()
                ),
                _ => format!("detected languages of {detected} posts in {seconds:.2} s"),
            });
            by_detector.insert(key, (post_det, query_det));
        }
        Detections { by_detector }
    }

    fn for_analyzer(&self, a: &Analyzer) -> (&[Option<Detection>], &[Option<Detection>]) {
        match a.detector().and_then(|d| self.by_detector.get(&Self::key(d))) {
            Some((p, q)) => (p, q),
            None => (&[], &[]),
        }
    }
}

/// Mean and 95th percentile (nearest rank) of latencies.
fn latency_summary(ms: &[f64]) -> (f64, f64) {
    if ms.is_empty() {
        return (0.0, 0.0);
    }
    let mut sorted = ms.to_vec();
    sorted.sort_by(f64::total_cmp);
    let rank = ((0.95 * sorted.len() as f64).ceil() as usize).clamp(1, sorted.len());
    (ms.iter().sum::<f64>() / ms.len() as f64, sorted[rank - 1])
}

fn abbreviate(items: &[String]) -> String {
    const SHOWN: usize = 10;
    if items.len() <= SHOWN {
        items.join(", ")
    } else {
        format!("{}, … ({} more)", items[..SHOWN].join(", "), items.len() - SHOWN)
    }
}

/// An input file's role, path and SHA-256, for the report.
fn hash_input(role: &str, path: &Path) -> Result<InputFile> {
    let sha256 = input::sha256_of(path)?;
    Ok(InputFile { role: role.to_string(), path: path.display().to_string(), sha256 })
}

/// The report shows the deterministic part of a build's cost (its time is
/// under `timing`).
impl From<&BuildCost> for Cost {
    fn from(c: &BuildCost) -> Cost {
        Cost {
            index_bytes: c.index_bytes,
            distinct_terms: c.distinct_terms,
            mean_tokens_per_post: c.mean_tokens_per_post,
            posts_per_field: c.posts_per_field.clone(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn latency_percentile_is_nearest_rank() {
        // Nearest-rank percentile: rank = ceil(0.95 · 20) = 19 (common practice, no source).
        let ms: Vec<f64> = (1..=20).map(f64::from).collect();
        assert_eq!(latency_summary(&ms), (10.5, 19.0));
    }

    #[test]
    fn baseline_must_exist_and_names_be_unique() {
        let names = vec![ChainName::from("a"), ChainName::from("b")];
        assert_eq!(baseline_index(&names, None).unwrap(), 0);
        assert_eq!(baseline_index(&names, Some(&ChainName::from("b"))).unwrap(), 1);
        let err = baseline_index(&names, Some(&ChainName::from("c"))).unwrap_err();
        assert_eq!(err.to_string(), "--baseline \"c\" is not one of the systems (a, b)");
        let dup = vec![ChainName::from("a"), ChainName::from("a")];
        assert!(baseline_index(&dup, None).unwrap_err().to_string().contains("twice"));
    }

    /// A second compute with the cache gives the same detections without
    /// calling the detector; without a cache the detector runs each time.
    #[test]
    fn detections_are_reused_from_the_cache() {
        use std::cell::Cell;

        use crate::analysis::builtin_chains;
        use crate::ids::PostId;
        use crate::input::LangCode;

        let en = LangCode::parse("en").expect("code");
        let chains = builtin_chains(en).expect("built-ins");
        let analyzers: Vec<Analyzer> = chains
            .iter()
            .map(|c| Analyzer::build(c, &AnalysisContext::default()).expect("builds"))
            .collect();
        let base = [
            "Der Hafen ist heute wegen des Sturms geschlossen.",
            "The harbour is closed today because of the storm.",
            "Le port est fermé aujourd'hui à cause de la tempête.",
        ];
        let posts: Vec<Post> = (0..30)
            .map(|i| Post {
                id: PostId(format!("p{i}")),
                text: base[i % 3].to_string(),
                lang: (i == 4).then_some(en),
            })
            .collect();
        let queries = Vec::new();
        let dir = tempfile::tempdir().expect("temp dir");
        let cache = DetectCache::new(dir.path()).with_min_texts(1);
        let calls = Cell::new(0);
        let detect = |d: &LangDetector, texts: &[&str]| {
            calls.set(calls.get() + 1);
            d.detect_all(texts)
        };
        let mut lines = Vec::new();
        let mut progress = |l: &str| lines.push(l.to_string());
        let first = Detections::compute_with(
            &analyzers,
            &posts,
            &queries,
            Some(&cache),
            &detect,
            &mut progress,
        );
        // One detector (only `routed` has one): posts, then the (empty, uncached) queries.
        assert_eq!(calls.get(), 2);
        let second = Detections::compute_with(
            &analyzers,
            &posts,
            &queries,
            Some(&cache),
            &detect,
            &mut progress,
        );
        assert_eq!(calls.get(), 3, "posts came from the cache");
        assert_eq!(second.by_detector, first.by_detector);
        let routed = analyzers.iter().find(|a| a.detector().is_some()).expect("routed");
        let (post_det, _) = second.for_analyzer(routed);
        assert_eq!(post_det.len(), 30);
        assert_eq!(post_det[0].map(|d| d.lang.as_str().to_string()).as_deref(), Some("de"));
        assert_eq!(post_det[4], None, "a declared language is not detected");
        assert!(lines[0].starts_with("detected languages of 29 posts"), "{lines:?}");
        assert!(lines[1].starts_with("read the language detections of 29 posts"), "{lines:?}");
        Detections::compute_with(&analyzers, &posts, &queries, None, &detect, &mut |_| {});
        assert_eq!(calls.get(), 5, "no cache: detected again");
    }
}
