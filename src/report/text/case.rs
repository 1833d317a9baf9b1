//! The reindex case and the findings per compared system, as [`Span`]s
//! both renderings draw: the recommendation with its gain, cost, holes and
//! what it rests on; one sentence per system; the settings and coverage
//! lines. Part of [`crate::report::text`].

use super::*;

/// Whether a smaller value of `metric` is the better one (`unjudged@k`).
pub fn lower_is_better(metric: &str) -> bool {
    metric.starts_with("unjudged@")
}

/// The headline metric of a report: the first of `--metrics` that measures
/// quality, skipping `unjudged@k` (a count of judging holes, lower is
/// better, which cannot carry a recommendation). Empty when every metric is
/// an `unjudged@k`.
pub fn headline(r: &Report) -> String {
    r.settings.metrics.iter().find(|m| !lower_is_better(m)).cloned().unwrap_or_default()
}

/// Whether a comparison row shows a difference in the metric's good direction.
pub fn improves(c: &ComparisonRow) -> bool {
    if lower_is_better(&c.metric) {
        c.delta < 0.0
    } else {
        c.delta > 0.0
    }
}

/// The chain to reindex with: among the significant improvements on the
/// headline metric, the largest. `None` when no chain is detectably better.
pub fn recommended<'a>(r: &'a Report, headline: &str) -> Option<&'a ComparisonRow> {
    let mut best: Option<&ComparisonRow> = None;
    for c in r.comparisons.iter().filter(|c| c.metric == headline && c.significant && improves(c)) {
        if best.is_none_or(|b| c.delta.abs() > b.delta.abs()) {
            best = Some(c);
        }
    }
    best
}

/// The `unjudged@k` metric the judging-hole figures come from: the one at
/// the headline's cutoff (`unjudged@10` for `ndcg@10`) when measured, else
/// `unjudged@10`, else the first `unjudged@k` of the metric list.
pub(super) fn holes_metric<'a>(r: &'a Report, headline: &str) -> Option<(usize, &'a str)> {
    headline
        .split_once('@')
        .and_then(|(_, k)| r.metric_index(&format!("unjudged@{k}")))
        .or_else(|| r.metric_index("unjudged@10"))
        .or_else(|| r.settings.metrics.iter().position(|m| m.starts_with("unjudged@")))
        .and_then(|i| r.settings.metrics.get(i).map(|m| (i, m.as_str())))
}

fn mean_of(r: &Report, system: &str, metric: usize) -> Option<f64> {
    r.summary.iter().find(|s| s.system.as_str() == system)?.metrics.get(metric).map(|m| m.mean)
}

fn cost_of<'a>(r: &'a Report, system: &str) -> Option<&'a Cost> {
    r.systems.iter().find(|s| s.name.as_str() == system)?.cost.as_ref()
}

/// `1 evaluated query`, `3 evaluated queries`.
fn evaluated_queries(n: usize) -> String {
    counted(n, "evaluated query", "evaluated queries")
}

/// What the report compares, counted: `4 analysis chains` for `run`,
/// `2 runs` for `score`.
pub fn systems_compared(r: &Report) -> String {
    if r.command == "run" {
        counted(r.systems.len(), "analysis chain", "analysis chains")
    } else {
        counted(r.systems.len(), "run", "runs")
    }
}

/// Why a comparison carries no test, in the report's words (`not tested: 1
/// evaluated query (a paired test needs at least 2)`); `None` when it was
/// tested. metrics.md: with n < 2 no test is computed.
pub fn not_tested(c: &ComparisonRow) -> Option<String> {
    if c.p_holm.is_some() {
        return None;
    }
    Some(if c.queries < 2 {
        format!("not tested: {} (a paired test needs at least 2)", evaluated_queries(c.queries))
    } else {
        "not tested: no p-value could be computed".to_string()
    })
}

/// `1 compared system`, `3 compared systems`.
fn compared(n: usize) -> String {
    counted(n, "compared system", "compared systems")
}

/// The reindex case as paragraphs: the recommendation (or why there is
/// none), the gain with its interval and adjusted p, the cost against the
/// baseline, what it rests on and the judging holes that could change it.
pub fn reindex_case(r: &Report, headline: &str) -> Vec<Vec<Span>> {
    let base = r.settings.baseline.as_str();
    let mut out: Vec<Vec<Span>> = Vec::new();
    let rows: Vec<&ComparisonRow> = r.comparisons.iter().filter(|c| c.metric == headline).collect();
    // `run` weighs a reindex; `score` compares runs of systems already built.
    let decision = if r.command == "run" { "reindexing" } else { "a switch" };
    if headline.is_empty() {
        // Every metric is an `unjudged@k`: fewer holes is not a better
        // ranking, so nothing can be recommended, however many systems.
        let listed: Vec<Span> = r
            .settings
            .metrics
            .iter()
            .enumerate()
            .flat_map(|(i, m)| [t(if i == 0 { "" } else { ", " }), code(m.as_str())])
            .collect();
        let mut p = vec![Span::Strong(vec![t("No quality metric to compare on.")]), t(" ")];
        p.push(code("--metrics"));
        p.push(t(" lists only "));
        p.extend(listed);
        p.push(t(format!(
            ", which counts the posts nobody judged (lower is better) and says nothing about \
             which of the {} ranks better, so there is no case for or against {decision}. Put \
             a quality metric first, for example ",
            systems_compared(r)
        )));
        p.push(code("--metrics ndcg@10,unjudged@10"));
        p.push(t("."));
        out.push(p);
        return out;
    }
    if rows.is_empty() {
        out.push(vec![
            Span::Strong(vec![t("Nothing to compare.")]),
            t(format!(
                " Only one {} was scored, on {}, so there is no case for or against {decision}.",
                if r.command == "run" { "chain" } else { "system" },
                evaluated_queries(r.counts.queries_evaluated)
            )),
        ]);
        return out;
    }
    let rests_on = vec![t(format!(
        "This rests on {} ({} skipped for having no relevant post) and {} \
         judgments; significance is a two-sided paired randomization test, Holm-adjusted across \
         {}, at α = {}.",
        evaluated_queries(r.counts.queries_evaluated),
        r.counts.queries_skipped,
        r.counts.judgments,
        compared(rows.len()),
        r.settings.alpha
    ))];
    match recommended(r, headline) {
        Some(c) => {
            out.push(vec![
                Span::Strong(vec![
                    t(if r.command == "run" { "Reindex with " } else { "Switch to " }),
                    code(c.system.as_str()),
                    t("."),
                ]),
                t(format!(" On {headline} it beats ")),
                code(base),
                t(format!(
                    " by {} (95% CI of the difference {}, {} after Holm; {} queries won, {} lost, \
                     {} tied).",
                    signed(c.delta),
                    interval(c.delta_ci_low, c.delta_ci_high),
                    p_equals(c.p_holm),
                    c.wins,
                    c.losses,
                    c.ties
                )),
            ]);
            out.extend(definitions_case(r, c.system.as_str(), base));
            out.push(other_metrics(r, c, headline));
            out.extend(largest_gain(r, c.system.as_str()));
            out.push(cost_case(r, c.system.as_str(), base));
            let mut rests = rests_on;
            if let Some(m) = c.min_detectable {
                rests.push(t(format!(
                    " With this query set, differences of about {} or more are detectable.",
                    fixed(m)
                )));
            }
            out.push(rests);
            out.push(holes_case(r, Some(c.system.as_str()), base, headline));
        }
        None => {
            out.push(vec![
                Span::Strong(vec![
                    t(format!(
                        "No {} is detectably better than the baseline ",
                        if r.command == "run" { "chain" } else { "system" }
                    )),
                    code(base),
                    t(format!(" on {headline}.")),
                ]),
                t(format!(
                    "{}, so this report does not recommend {}: keep ",
                    if r.counts.queries_evaluated < 2 {
                        format!(
                            " With {} no paired test can run (it needs at least 2)",
                            evaluated_queries(r.counts.queries_evaluated)
                        )
                    } else {
                        format!(
                            " At α = {} with these {} queries {}",
                            r.settings.alpha,
                            r.counts.queries_evaluated,
                            if rows.len() == 1 {
                                "the compared system shows no significant gain".to_string()
                            } else {
                                format!(
                                    "none of the {} shows a significant gain",
                                    compared(rows.len())
                                )
                            }
                        )
                    },
                    decision
                )),
                code(base),
                t("."),
            ]);
            let closest = rows.iter().copied().max_by(|a, b| {
                let (x, y) = if lower_is_better(headline) {
                    (-a.delta, -b.delta)
                } else {
                    (a.delta, b.delta)
                };
                x.total_cmp(&y)
            });
            let mut p = Vec::new();
            if let Some(c) = closest {
                p.push(t("Closest: "));
                p.push(code(c.system.as_str()));
                p.push(t(match not_tested(c) {
                    Some(why) => format!(", {}, {why}.", signed(c.delta)),
                    None => format!(
                        ", {} (95% CI of the difference {}, {} after Holm){}.",
                        signed(c.delta),
                        interval(c.delta_ci_low, c.delta_ci_high),
                        p_equals(c.p_holm),
                        c.min_detectable
                            .map(|m| format!(
                                "; this query set detects differences of about {} or more",
                                fixed(m)
                            ))
                            .unwrap_or_default()
                    ),
                }));
            }
            for c in rows.iter().filter(|c| c.significant && !improves(c)) {
                p.push(t(" "));
                p.push(code(c.system.as_str()));
                p.push(t(format!(
                    " is detectably worse ({}, {} after Holm).",
                    signed(c.delta),
                    p_equals(c.p_holm)
                )));
            }
            out.push(p);
            out.extend(closest.and_then(|c| largest_gain(r, c.system.as_str())));
            out.push(rests_on);
            out.push(holes_case(r, closest.map(|c| c.system.as_str()), base, headline));
        }
    }
    out
}

/// What the recommended chain and the baseline are, in full (a `stemmed`
/// chain stems one language only, which a multilingual corpus needs to
/// know): `None` for `score`, whose systems are run files.
fn definitions_case(r: &Report, system: &str, base: &str) -> Option<Vec<Span>> {
    let chosen = chain_definition(r, system)?;
    let mut p = vec![t("What was compared: "), code(system)];
    p.push(t(format!(" = {}.", definition_line(chosen))));
    if let Some(b) = chain_definition(r, base) {
        p.push(t(" Baseline "));
        p.push(code(base));
        p.push(t(format!(" = {}.", definition_line(b))));
    }
    p.push(t(" Every chain is under "));
    p.push(Span::Link(Section::Chains, vec![t("Chains")]));
    p.push(t("."));
    Some(p)
}

/// Where else the recommended chain differs detectably from the baseline,
/// on the metrics that measure ranking quality. A diagnostic metric
/// (`unjudged@k`, the share of judging holes) never counts as "better": a
/// top k with fewer holes says where the judgments came from, not that the
/// ranking is better. What happened to the holes is said in a sentence of
/// its own.
pub(super) fn other_metrics(r: &Report, c: &ComparisonRow, headline: &str) -> Vec<Span> {
    let others: Vec<&ComparisonRow> = r
        .comparisons
        .iter()
        .filter(|o| o.system == c.system && o.metric != headline && o.significant)
        .collect();
    let (holes, quality): (Vec<&ComparisonRow>, Vec<&ComparisonRow>) =
        others.into_iter().partition(|o| is_diagnostic(&o.metric));
    let better: Vec<String> =
        quality.iter().filter(|o| improves(o)).map(|o| o.metric.clone()).collect();
    let worse: Vec<String> = quality
        .iter()
        .filter(|o| !improves(o))
        .map(|o| format!("{} ({}, {} after Holm)", o.metric, signed(o.delta), p_equals(o.p_holm)))
        .collect();
    let mut p = vec![t("On the other metrics it is detectably better on ")];
    p.push(t(if better.is_empty() { "none".to_string() } else { better.join(", ") }));
    if worse.is_empty() {
        p.push(t(" and detectably worse on none."));
    } else {
        p.push(t(format!(" but detectably worse on {}.", worse.join(", "))));
    }
    for h in holes {
        let k = h.metric.trim_start_matches("unjudged@");
        p.push(t(" Its top "));
        p.push(t(format!(
            "{k} holds detectably {} unjudged posts than ",
            if h.delta < 0.0 { "fewer" } else { "more" }
        )));
        p.push(code(h.baseline.as_str()));
        p.push(t(format!(
            "'s ({} {}, {} after Holm): a fact about the judging holes, not a quality gain or \
             loss, so it is not counted above (see the judging holes below).",
            h.metric,
            signed(h.delta),
            p_equals(h.p_holm)
        )));
    }
    p
}

/// Whether `metric` is a diagnostic of the judgments (`unjudged@k`) rather
/// than a measure of ranking quality.
pub fn is_diagnostic(metric: &str) -> bool {
    metric.parse::<crate::eval::Metric>().is_ok_and(|m| m.is_diagnostic())
}

/// Index cost of `system` against the baseline.
fn cost_case(r: &Report, system: &str, base: &str) -> Vec<Span> {
    match (cost_of(r, system), cost_of(r, base)) {
        (Some(c), Some(b)) => vec![
            t("Cost against "),
            code(base),
            t(format!(
                ": index size {} ({} against {}), vocabulary {} ({} against {} distinct terms), \
                 {:.1} against {:.1} tokens per post; build time: its ratio to the baseline is \
                 under ",
                ratio(c.index_bytes as f64, b.index_bytes as f64),
                bytes(c.index_bytes),
                bytes(b.index_bytes),
                ratio(c.distinct_terms as f64, b.distinct_terms as f64),
                c.distinct_terms,
                b.distinct_terms,
                c.mean_tokens_per_post,
                b.mean_tokens_per_post
            )),
            Span::Link(Section::Timing, vec![t("Timing")]),
            t(" (wall-clock, so it varies between runs and machines)."),
        ],
        _ => vec![t(
            "Cost: not measured — these systems were scored from run files, not indexed by this \
             bench, so index size, vocabulary and build time are unknown.",
        )],
    }
}

/// The build time of the recommended chain against the baseline's, for the
/// Timing section of both renderings (wall-clock, so never in the
/// deterministic part): `None` without a recommendation or timings.
pub fn build_time(r: &Report, headline: &str) -> Option<Vec<Span>> {
    let rec = recommended(r, headline)?;
    let b = r.timing.chains.iter().find(|c| c.name == r.settings.baseline)?;
    let c = r.timing.chains.iter().find(|c| c.name == rec.system)?;
    Some(vec![
        t("Build time of the recommended "),
        code(rec.system.as_str()),
        t(format!(": {} that of ", ratio(c.build_seconds, b.build_seconds))),
        code(b.name.as_str()),
        t(format!(" ({:.3} s against {:.3} s).", c.build_seconds, b.build_seconds)),
    ])
}

/// The largest gain of `system` among the queries that moved most, as one
/// line pointing at that section: query, example post with both ranks and
/// the query terms it matched under `system`. Ids and terms only, never the
/// post text, so it holds under `--redact`. `None` for `score` (no moved
/// queries) or without a gain. The bench picks the moved queries on the
/// headline metric.
fn largest_gain(r: &Report, system: &str) -> Option<Vec<Span>> {
    let m = r
        .moved
        .iter()
        .filter(|m| m.system.as_str() == system && m.delta > 0.0)
        .max_by(|a, b| a.delta.total_cmp(&b.delta).then_with(|| b.query_id.cmp(&a.query_id)))?;
    let rank =
        |x: Option<usize>| x.map_or_else(|| "not retrieved".to_string(), |v| format!("rank {v}"));
    let mut p =
        vec![t("Largest gain: "), code(m.query_id.as_str()), t(format!(" ({})", signed(m.delta)))];
    if let Some(id) = &m.post_id {
        p.push(t(", post "));
        p.push(code(id.as_str()));
        p.push(t(format!(" from {} to {}", rank(m.rank_baseline), rank(m.rank_system))));
        if !m.matched_system.is_empty() {
            p.push(t(" (matched "));
            for (i, term) in m.matched_system.iter().enumerate() {
                if i > 0 {
                    p.push(t(", "));
                }
                p.push(code(term.as_str()));
            }
            p.push(t(")"));
        }
    }
    p.push(t("; see "));
    p.push(Span::Link(Section::Moved, vec![t("Queries that moved most")]));
    p.push(t("."));
    Some(p)
}

/// The judging holes of `system` (the recommended or closest chain) and the
/// baseline, measured by the `unjudged@k` at the headline's cutoff. Judging
/// a hole can move a score either way: a post found relevant adds to the
/// system's DCG but also to the ideal DCG and to R, the number of relevant
/// posts, so nDCG and MAP can fall. The paragraph therefore gives the size
/// of the holes and draws no direction from it.
fn holes_case(r: &Report, system: Option<&str>, base: &str, headline: &str) -> Vec<Span> {
    let Some((mi, key)) = holes_metric(r, headline) else {
        return vec![
            t("Judging holes: unknown, because no "),
            code("unjudged@k"),
            t(" is among the metrics; add "),
            code("unjudged@10"),
            t(" to "),
            code("--metrics"),
            t(" to see how much of each top 10 was never judged."),
        ];
    };
    let k = key.trim_start_matches("unjudged@");
    let base_holes = mean_of(r, base, mi).map(percent).unwrap_or_else(|| "n/a".into());
    let sys_holes = system.and_then(|s| mean_of(r, s, mi).map(|h| (s, h)));
    let mut p = vec![t(format!("Judging holes ({key}): "))];
    match sys_holes {
        Some((s, h)) => {
            p.push(t(format!("{} of ", percent(h))));
            p.push(code(s));
            p.push(t(format!("'s top {k} is unjudged, against {base_holes} of ")));
            p.push(code(base));
            p.push(t("'s."));
        }
        None => {
            p.push(t(format!("{base_holes} of ")));
            p.push(code(base));
            p.push(t(format!("'s top {k} is unjudged.")));
        }
    }
    p.push(t(
        " Unjudged posts count as not relevant. Judging them can move a score either way: a \
         post found relevant raises a system's gain but also the ideal ranking's and the number \
         of relevant posts, so nDCG and MAP can fall as well as rise, and the difference can \
         grow, shrink or reverse. ",
    ));
    p.push(code(format!("postassay pool --depth {k}")));
    p.push(t(" gathers the unjudged pairs to judge."));
    p
}

/// The query groups (languages, tags) where `c`'s system differs
/// detectably from the baseline on `headline`, in breakdown order.
fn group_findings<'a>(
    r: &'a Report,
    c: &ComparisonRow,
    headline: &str,
) -> Vec<(&'a BreakdownCell, &'a ComparisonRow)> {
    r.breakdowns
        .iter()
        .filter_map(|cell| {
            let cc =
                cell.comparisons.iter().find(|x| x.system == c.system && x.metric == headline)?;
            cc.significant.then_some((cell, cc))
        })
        .collect()
}

/// One sentence per compared system: the overall finding on the headline
/// metric with the 95% interval of the difference and its Holm-adjusted p
/// (or why it was not tested), then the query groups (languages, tags)
/// where it is detectably better or worse, each with its query count.
pub fn sentence(r: &Report, c: &ComparisonRow, headline: &str) -> Vec<Span> {
    let mut out = vec![code(c.system.as_str()), t(" ")];
    if let Some(why) = not_tested(c) {
        out.push(t("differs from "));
        out.push(code(c.baseline.as_str()));
        out.push(t(format!(" by {} on {headline} overall, {why}.", signed(c.delta))));
        return out;
    }
    let overall = format!(
        "{}, 95% CI {}, {} after Holm",
        signed(c.delta),
        interval(c.delta_ci_low, c.delta_ci_high),
        p_equals(c.p_holm)
    );
    if c.significant {
        out.push(t(format!("scores {} than ", if c.delta > 0.0 { "higher" } else { "lower" })));
        out.push(code(c.baseline.as_str()));
        out.push(t(format!(" on {headline} overall ({overall})")));
    } else {
        out.push(t("shows no detectable difference from "));
        out.push(code(c.baseline.as_str()));
        out.push(t(format!(
            " on {headline} overall ({overall}{})",
            c.min_detectable
                .map(|m| format!(
                    "; this query set detects differences of about {} or more",
                    fixed(m)
                ))
                .unwrap_or_default()
        )));
    }
    let findings = group_findings(r, c, headline);
    for (label, better) in [("; better for ", true), ("; worse for ", false)] {
        let groups: Vec<_> = findings.iter().filter(|(_, cc)| improves(cc) == better).collect();
        if groups.is_empty() {
            continue;
        }
        out.push(t(label));
        for (i, (cell, cc)) in groups.iter().enumerate() {
            if i > 0 {
                out.push(t(", "));
            }
            out.push(t(format!("{} ", cell.dimension)));
            out.push(code(cell.value.as_str()));
            out.push(t(format!(
                " ({}, n = {}, {})",
                signed(cc.delta),
                cc.queries,
                p_equals(cc.p_holm)
            )));
        }
    }
    if findings.is_empty() && !r.breakdowns.is_empty() {
        if r.breakdowns.iter().any(|cell| !cell.too_small) {
            out.push(t("; no query language or tag group differs detectably"));
        } else {
            out.push(t(format!(
                "; no query language or tag group has the {MIN_BREAKDOWN_QUERIES} queries a test \
                 needs"
            )));
        }
    }
    out.push(t("."));
    out
}

/// Whether any [`sentence`] names a query group (so the reader needs
/// [`breakdown_caveat`] next to the sentences).
pub fn names_groups(r: &Report, headline: &str) -> bool {
    r.comparisons
        .iter()
        .filter(|c| c.metric == headline && not_tested(c).is_none())
        .any(|c| !group_findings(r, c, headline).is_empty())
}

/// How to read a breakdown p-value: Holm adjusts it across the systems of
/// one group only, not across the groups, so with many groups some will
/// look significant by chance. `None` when no breakdown cell was tested.
pub fn breakdown_caveat(r: &Report) -> Option<String> {
    let tests: usize = r.breakdowns.iter().map(|cell| cell.comparisons.len()).sum();
    (tests > 0).then(|| {
        format!(
            "Breakdown p-values are per group: Holm adjusts them across the systems within a \
             group, not across the {tests} breakdown tests of this report, so treat a single \
             group's finding as a lead to check (exploratory), not as a result."
        )
    })
}

/// The settings that shaped the numbers, as one sentence of the inputs
/// section.
pub fn settings_sentence(r: &Report) -> Vec<Span> {
    let st = &r.settings;
    let mut p = vec![t(format!(
        "{} {} (report layout {}), command ",
        r.tool.name, r.tool.version, r.schema_version
    ))];
    p.push(code(r.command.as_str()));
    p.push(t(". Metrics: "));
    for (i, m) in st.metrics.iter().enumerate() {
        if i > 0 {
            p.push(t(", "));
        }
        p.push(code(m.as_str()));
    }
    p.push(t(format!(
        ". Relevant from grade {}; gain {}; highest grade {}; seed {}; {} sign assignments when \
         over 16 queries; {} bootstrap resamples; α = {}{}.",
        st.relevant_from,
        st.gain,
        st.max_grade,
        st.seed,
        st.permutations,
        st.bootstrap_resamples,
        st.alpha,
        st.depth.map(|d| format!("; {d} results kept per query")).unwrap_or_default()
    )));
    p
}

/// How many evaluated queries each system answered: one line per system
/// that left some unanswered (they score 0), else one line saying every
/// system answered every evaluated query. The warnings say the same.
pub fn coverage_lines(r: &Report) -> Vec<String> {
    let kind = if r.command == "run" { "chain" } else { "run" };
    let lines: Vec<String> =
        r.systems.iter().filter_map(|s| s.coverage.describe(kind, s.name.as_str())).collect();
    if lines.is_empty() {
        vec![format!(
            "Every {kind} returned results for each of the {}.",
            evaluated_queries(r.counts.queries_evaluated)
        )]
    } else {
        lines
    }
}
