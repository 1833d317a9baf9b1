//! `postassay cache`: list the cached chain indexes with their size and age,
//! and remove them (all, the unfinished ones, those older than some days,
//! or by key).

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Args, Subcommand};

use postassay::bench::detect_cache::cache_root_from_env;
use postassay::error::Error;
use postassay::index::cache::{Entry, IndexCache};

/// Shortest key prefix `cache drop` accepts.
const MIN_PREFIX: usize = 8;

#[derive(Debug, Args)]
pub struct CacheArgs {
    /// Cache directory (default: $POSTASSAY_CACHE_DIR, else the user's
    /// cache directory).
    #[arg(long, value_name = "DIR", global = true)]
    cache_dir: Option<PathBuf>,
    #[command(subcommand)]
    action: Option<CacheAction>,
}

#[derive(Debug, Subcommand)]
enum CacheAction {
    /// List the cached indexes (the default).
    List,
    /// Remove cached indexes.
    Drop(DropArgs),
}

#[derive(Debug, Args)]
struct DropArgs {
    /// Keys (or their first 8 or more characters) to remove.
    keys: Vec<String>,
    /// Remove every entry.
    #[arg(long)]
    all: bool,
    /// Remove the unfinished entries (interrupted builds).
    #[arg(long)]
    unfinished: bool,
    /// Remove entries last written more than DAYS days ago.
    #[arg(long, value_name = "DAYS")]
    older_than: Option<u64>,
}

pub fn execute(args: CacheArgs) -> anyhow::Result<ExitCode> {
    let root = args.cache_dir.clone().or_else(cache_root_from_env).ok_or_else(|| {
        Error::usage(
            "no cache directory: give --cache-dir DIR (POSTASSAY_NO_CACHE is set, or neither \
             POSTASSAY_CACHE_DIR nor a home directory is known)",
        )
    })?;
    let cache = IndexCache::new(root.join("indexes"));
    let entries = cache.entries()?;
    match args.action.unwrap_or(CacheAction::List) {
        CacheAction::List => print!("{}", listing(&cache, &entries)),
        CacheAction::Drop(d) => {
            let chosen = chosen(&entries, &d)?;
            let mut bytes = 0;
            for e in &chosen {
                cache.remove(&e.name)?;
                bytes += e.bytes;
            }
            println!(
                "removed {} ({}) from {}",
                postassay::plural::counted(chosen.len(), "entry", "entries"),
                size(bytes),
                cache.dir().display()
            );
        }
    }
    Ok(ExitCode::SUCCESS)
}

/// The entries `drop` removes; a key that matches nothing or several
/// entries is a usage error, and nothing is removed then.
fn chosen<'a>(entries: &'a [Entry], d: &DropArgs) -> Result<Vec<&'a Entry>, Error> {
    if d.keys.is_empty() && !d.all && !d.unfinished && d.older_than.is_none() {
        return Err(Error::usage(
            "cache drop: give keys, --all, --unfinished or --older-than DAYS",
        ));
    }
    let mut out: Vec<&Entry> = Vec::new();
    for key in &d.keys {
        if key.len() < MIN_PREFIX {
            return Err(Error::usage(format!(
                "cache drop {key:?}: give at least {MIN_PREFIX} characters of a key"
            )));
        }
        let matching: Vec<&Entry> = entries.iter().filter(|e| e.name.starts_with(key)).collect();
        match matching.as_slice() {
            [one] => out.push(one),
            [] => return Err(Error::usage(format!("cache drop: no entry {key:?}"))),
            _ => {
                return Err(Error::usage(format!(
                    "cache drop: {key:?} matches {} entries; give more of the key",
                    matching.len()
                )))
            }
        }
    }
    for e in entries {
        let old = d.older_than.is_some_and(|days| e.age_seconds > days.saturating_mul(86_400));
        if d.all || (d.unfinished && e.manifest.is_none()) || old {
            out.push(e);
        }
    }
    out.sort_by(|a, b| a.name.cmp(&b.name));
    out.dedup_by(|a, b| a.name == b.name);
    Ok(out)
}

/// The listing: one line per entry, then the total.
fn listing(cache: &IndexCache, entries: &[Entry]) -> String {
    let mut s = format!("index cache {}\n", cache.dir().display());
    if entries.is_empty() {
        s.push_str("(empty)\n");
        return s;
    }
    s.push_str("key           chain                 posts      size        age  state\n");
    for e in entries {
        let (chain, posts, state) = match &e.manifest {
            Some(m) => (m.chain.as_str(), m.posts.to_string(), "whole"),
            None => ("-", "-".to_string(), "unfinished"),
        };
        let short: String = e.name.trim_start_matches('.').chars().take(12).collect();
        s.push_str(&format!(
            "{short:<13} {chain:<20} {posts:>7} {:>9} {:>10}  {state}\n",
            size(e.bytes),
            age(e.age_seconds)
        ));
    }
    let total: u64 = entries.iter().map(|e| e.bytes).sum();
    s.push_str(&format!(
        "{}, {} in all\n",
        postassay::plural::counted(entries.len(), "entry", "entries"),
        size(total)
    ));
    s
}

/// Bytes in binary units, one decimal.
fn size(bytes: u64) -> String {
    const UNITS: [&str; 4] = ["KiB", "MiB", "GiB", "TiB"];
    if bytes < 1024 {
        return format!("{bytes} B");
    }
    let mut value = bytes as f64 / 1024.0;
    let mut unit = 0;
    while value >= 1024.0 && unit + 1 < UNITS.len() {
        value /= 1024.0;
        unit += 1;
    }
    format!("{value:.1} {}", UNITS[unit])
}

/// An age in the largest whole unit.
fn age(seconds: u64) -> String {
    match seconds {
        s if s < 120 => format!("{s} s"),
        s if s < 7_200 => format!("{} min", s / 60),
        s if s < 172_800 => format!("{} h", s / 3_600),
        s => format!("{} days", s / 86_400),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_and_ages_read_plainly() {
        assert_eq!(size(512), "512 B");
        assert_eq!(size(1536), "1.5 KiB");
        assert_eq!(size(3 * 1024 * 1024 * 1024), "3.0 GiB");
        assert_eq!(age(59), "59 s");
        assert_eq!(age(600), "10 min");
        assert_eq!(age(10_800), "3 h");
        assert_eq!(age(3 * 86_400), "3 days");
    }
}
