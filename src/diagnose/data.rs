//! The open reference data the diagnostics read: where each kind of file
//! lives in a data directory, and readers for the three layouts (lemma
//! lists, sentences of known language, hashtag gold sets).
//!
//! Place in the data flow: the input end of `diagnose` (beside `input`,
//! which reads the bench's own files). The layout of a data directory is the
//! one of the shared open data (its README describes the sources):
//!
//! ```text
//! DATA/ud/NAME.lemmas.tsv       form<TAB>lemma[<TAB>upos]   (NAME = en, it-pud, …)
//! DATA/ud/NAME.sentences.tsv    sent_id<TAB>text
//! DATA/ud_pud/NAME.sentences.tsv
//! DATA/hashtags/NAME.tsv        hashtag<TAB>gold[<TAB>alternatives][<TAB>match]
//! DATA/ud_nospace/NAME.words.tsv  sent_id<TAB>text<TAB>gold words joined by single spaces
//! ```
//!
//! A file's language is the part of NAME before the first `-`, an ISO 639-1
//! code (`it-pud` is Italian); files whose NAME does not start with one are
//! not data files and are left alone. Sets are taken in byte order of NAME so
//! reports are identical from run to run.
//!
//! Every reader checks the whole file and lists every bad line with the file
//! and the 1-based line (see [`Problems`]). A leading BOM and CRLF line ends
//! are accepted.

use std::path::{Path, PathBuf};

use crate::error::{Error, Problems, Result};
use crate::input::LangCode;

/// Sub-directory of lemma lists and sentences (Universal Dependencies).
pub const UD_DIR: &str = "ud";
/// Sub-directory of the parallel sentences (Parallel UD).
pub const PUD_DIR: &str = "ud_pud";
/// Sub-directory of the hashtag gold sets.
pub const HASHTAG_DIR: &str = "hashtags";
/// Sub-directory of the gold word segmentations of scripts written without
/// spaces.
pub const NOSPACE_DIR: &str = "ud_nospace";

/// Values of a gold set's optional fourth column, which says how the gold
/// relates to the tag (not an alternative segmentation).
pub const MATCH_KINDS: [&str; 3] = ["exact", "case", "edited"];

/// One data file found in a data directory.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DataFile {
    /// The sub-directory it was found in (`ud`, `ud_pud` or `hashtags`).
    pub collection: String,
    /// The name before the suffix (`en`, `it-pud`, `stan_dev_celebi`).
    pub name: String,
    /// The language of a `ud`/`ud_pud` file (`None` for gold sets).
    pub language: Option<LangCode>,
    /// Where it is.
    pub path: PathBuf,
}

/// The data files of a data directory, each list in byte order of name.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct DataSets {
    /// `ud/NAME.lemmas.tsv`.
    pub lemma_lists: Vec<DataFile>,
    /// `ud/NAME.sentences.tsv` then `ud_pud/NAME.sentences.tsv`.
    pub sentence_sets: Vec<DataFile>,
    /// `hashtags/NAME.tsv`.
    pub gold_sets: Vec<DataFile>,
    /// `ud_nospace/NAME.words.tsv`.
    pub word_sets: Vec<DataFile>,
}

impl DataSets {
    /// True when no data file at all was found.
    pub fn is_empty(&self) -> bool {
        self.lemma_lists.is_empty()
            && self.sentence_sets.is_empty()
            && self.gold_sets.is_empty()
            && self.word_sets.is_empty()
    }
}

/// Find the data files under `data` (see the module docs for the layout).
/// A missing sub-directory gives an empty list; `data` itself must be a
/// directory.
pub fn discover(data: &Path) -> Result<DataSets> {
    if !data.is_dir() {
        return Err(Error::usage(format!(
            "--data {}: expected a directory of open data, found {}",
            data.display(),
            if data.exists() { "a file" } else { "nothing" }
        )));
    }
    let ud = data.join(UD_DIR);
    let mut sentence_sets = files_with_suffix(&ud, UD_DIR, ".sentences.tsv", true)?;
    sentence_sets.extend(files_with_suffix(&data.join(PUD_DIR), PUD_DIR, ".sentences.tsv", true)?);
    Ok(DataSets {
        lemma_lists: files_with_suffix(&ud, UD_DIR, ".lemmas.tsv", true)?,
        sentence_sets,
        gold_sets: files_with_suffix(&data.join(HASHTAG_DIR), HASHTAG_DIR, ".tsv", false)?,
        word_sets: files_with_suffix(&data.join(NOSPACE_DIR), NOSPACE_DIR, ".words.tsv", true)?,
    })
}

/// The files of `dir` named `NAME<suffix>`, sorted by NAME; with
/// `with_language`, only those whose NAME starts with a language code.
fn files_with_suffix(
    dir: &Path,
    collection: &str,
    suffix: &str,
    with_language: bool,
) -> Result<Vec<DataFile>> {
    if !dir.is_dir() {
        return Ok(Vec::new());
    }
    let mut found = Vec::new();
    for entry in std::fs::read_dir(dir).map_err(|e| Error::io(dir, e))? {
        let entry = entry.map_err(|e| Error::io(dir, e))?;
        let path = entry.path();
        if !path.is_file() {
            continue;
        }
        let Some(file_name) = path.file_name().and_then(|n| n.to_str()) else { continue };
        let Some(name) = file_name.strip_suffix(suffix) else { continue };
        if name.is_empty() || name.contains('.') {
            continue;
        }
        let language = language_of_name(name);
        if with_language && language.is_none() {
            continue;
        }
        found.push(DataFile {
            collection: collection.to_string(),
            name: name.to_string(),
            language: if with_language { language } else { None },
            path,
        });
    }
    found.sort_by(|a, b| a.name.cmp(&b.name));
    Ok(found)
}

/// The language of a data set's name: the part before the first `-`.
pub fn language_of_name(name: &str) -> Option<LangCode> {
    LangCode::parse(name.split('-').next().unwrap_or(name))
}

/// A whole text file without its BOM; not UTF-8 is an error naming the line.
fn read_text(path: &Path) -> Result<String> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    let text = String::from_utf8(bytes).map_err(|e| {
        let good = e.utf8_error().valid_up_to();
        let line =
            e.as_bytes().get(..good).map_or(0, |b| b.iter().filter(|&&c| c == b'\n').count());
        Error::at_line(path, line as u64 + 1, "expected UTF-8 text, found invalid bytes")
    })?;
    Ok(match text.strip_prefix('\u{feff}') {
        Some(rest) => rest.to_string(),
        None => text,
    })
}

/// Non-empty lines with their 1-based numbers (CR of CRLF removed).
fn numbered_lines(text: &str) -> impl Iterator<Item = (u64, &str)> {
    text.lines().enumerate().filter(|(_, l)| !l.trim().is_empty()).map(|(i, l)| (i as u64 + 1, l))
}

/// A lemma-annotated word list: `(form, lemma)` rows in file order.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct LemmaList {
    /// Rows with a lemma, the lemma as written in the file.
    pub rows: Vec<(String, String)>,
    /// Rows whose lemma is `_` (none given), left out of `rows`.
    pub without_lemma: usize,
}

/// Read a `form<TAB>lemma[<TAB>pos]` list. A lemma `_` means "no lemma"
/// (counted, not kept); a row without a lemma column or with an empty form
/// or lemma is an error.
pub fn read_lemmas(path: &Path) -> Result<LemmaList> {
    let text = read_text(path)?;
    let mut problems = Problems::new(path);
    let mut list = LemmaList::default();
    for (line, row) in numbered_lines(&text) {
        let mut fields = row.split('\t');
        match (fields.next(), fields.next()) {
            (Some(form), Some(lemma)) if !form.is_empty() && !lemma.is_empty() => {
                if lemma == "_" {
                    list.without_lemma += 1;
                } else {
                    list.rows.push((form.to_string(), lemma.to_string()));
                }
            }
            _ => problems.push(
                line,
                format!("expected form<TAB>lemma[<TAB>pos] with both non-empty, found {row:?}"),
            ),
        }
    }
    problems.finish(list)
}

/// One sentence of known language.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Sentence {
    /// Its id in the file.
    pub id: String,
    /// Its text.
    pub text: String,
}

/// Read a `sent_id<TAB>text` file (the text is everything after the first
/// tab). A line without a tab or with an empty text is an error.
pub fn read_sentences(path: &Path) -> Result<Vec<Sentence>> {
    let text = read_text(path)?;
    let mut problems = Problems::new(path);
    let mut out = Vec::new();
    for (line, row) in numbered_lines(&text) {
        match row.split_once('\t') {
            Some((id, sentence)) if !sentence.trim().is_empty() => {
                out.push(Sentence { id: id.to_string(), text: sentence.to_string() })
            }
            _ => problems.push(line, format!("expected sent_id<TAB>text, found {row:?}")),
        }
    }
    problems.finish(out)
}

/// One sentence with its gold word segmentation.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct GoldSentence {
    /// Line in the file.
    pub line: u64,
    /// Its id in the file.
    pub id: String,
    /// Its text.
    pub text: String,
    /// The gold words, in order.
    pub words: Vec<String>,
}

/// Read a `sent_id<TAB>text<TAB>words` file, the gold words joined by
/// single spaces. A line without the three columns, with an empty text or
/// without words is an error.
pub fn read_word_gold(path: &Path) -> Result<Vec<GoldSentence>> {
    let text = read_text(path)?;
    let mut problems = Problems::new(path);
    let mut out = Vec::new();
    for (line, row) in numbered_lines(&text) {
        let mut fields = row.split('\t');
        match (fields.next(), fields.next(), fields.next(), fields.next()) {
            (Some(id), Some(sentence), Some(words), None)
                if !sentence.trim().is_empty() && !words.trim().is_empty() =>
            {
                out.push(GoldSentence {
                    line,
                    id: id.to_string(),
                    text: sentence.to_string(),
                    words: words.split(' ').filter(|w| !w.is_empty()).map(String::from).collect(),
                })
            }
            _ => problems.push(
                line,
                format!("expected sent_id<TAB>text<TAB>gold words joined by spaces, found {row:?}"),
            ),
        }
    }
    problems.finish(out)
}

/// One row of a hashtag gold set.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct GoldTag {
    /// Line in the file.
    pub line: u64,
    /// The tag without `#`.
    pub tag: String,
    /// Accepted segmentations, words separated by spaces: the gold first,
    /// then the alternatives in file order.
    pub accepted: Vec<String>,
}

/// Read a hashtag gold set: `hashtag<TAB>gold[<TAB>alternatives…]`. Every
/// column after the gold holds alternatives joined by ` | ` (empty columns
/// are skipped), except a fourth column whose whole value is one of
/// [`MATCH_KINDS`], which the shared gold sets use to say how the gold
/// relates to the tag. A leading `#` on the tag is removed; a tag that is
/// only `#` is an error.
pub fn read_gold(path: &Path) -> Result<Vec<GoldTag>> {
    let text = read_text(path)?;
    let mut problems = Problems::new(path);
    let mut out = Vec::new();
    for (line, row) in numbered_lines(&text) {
        let fields: Vec<&str> = row.split('\t').collect();
        let (tag, gold) = match (fields.first(), fields.get(1)) {
            (Some(t), Some(g)) if !t.trim().is_empty() && !g.trim().is_empty() => (*t, *g),
            _ => {
                problems.push(
                    line,
                    format!("expected hashtag<TAB>gold[<TAB>alternatives], found {row:?}"),
                );
                continue;
            }
        };
        let mut accepted = vec![gold.trim().to_string()];
        for (i, column) in fields.iter().enumerate().skip(2) {
            if i == 3 && MATCH_KINDS.contains(&column.trim()) {
                continue;
            }
            for alt in column.split(" | ").map(str::trim).filter(|a| !a.is_empty()) {
                if !accepted.iter().any(|a| a == alt) {
                    accepted.push(alt.to_string());
                }
            }
        }
        let tag = tag.trim();
        let tag = tag.strip_prefix('#').unwrap_or(tag);
        if tag.is_empty() {
            problems.push(
                line,
                format!("column 1 (hashtag): expected a tag after the '#', found {row:?}"),
            );
            continue;
        }
        out.push(GoldTag { line, tag: tag.to_string(), accepted });
    }
    problems.finish(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp(name: &str, content: &str) -> (tempfile::TempDir, PathBuf) {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join(name);
        std::fs::write(&path, content).expect("fixture written");
        (dir, path)
    }

    #[test]
    fn gold_rows_keep_gold_first_and_skip_the_match_column() {
        let (_d, path) = temp(
            "g.tsv",
            "\u{feff}#TheGanjaBus\tThe Ganja bus\tthe ganja bus | The Ganja Bus\tcase\r\n\n\
             catch22\tcatch-22\tcatch 22\tedited\nrunit\trun it\t\texact\n",
        );
        let gold = read_gold(&path).expect("valid gold");
        assert_eq!(gold.len(), 3);
        assert_eq!(gold[0].tag, "TheGanjaBus");
        assert_eq!(gold[0].accepted, ["The Ganja bus", "the ganja bus", "The Ganja Bus"]);
        assert_eq!(gold[1].line, 3);
        assert_eq!(gold[1].accepted, ["catch-22", "catch 22"]);
        assert_eq!(gold[2].accepted, ["run it"]);
    }

    #[test]
    fn an_empty_tag_is_an_error_naming_its_line() {
        // Line 2 is `#` alone: nothing would be segmented, so the row is refused.
        let (_d, path) = temp("g.tsv", "runit\trun it\n#\tx\n");
        let err = read_gold(&path).expect_err("line 2 has no tag").to_string();
        assert_eq!(
            err,
            format!(
                "{}:2: column 1 (hashtag): expected a tag after the '#', found \"#\\tx\"",
                path.display()
            )
        );
    }

    #[test]
    fn bad_rows_are_listed_with_their_lines() {
        let (_d, path) = temp("l.tsv", "Häuser\tHaus\tNOUN\nkaputt\n\tx\nging\t_\tVERB\n");
        let err = read_lemmas(&path).expect_err("two bad lines").to_string();
        assert!(err.contains("l.tsv:2: expected form<TAB>lemma"), "{err}");
        assert!(err.contains("l.tsv:3: expected form<TAB>lemma"), "{err}");
        let (_d, path) = temp("l.tsv", "Häuser\tHaus\tNOUN\nging\t_\tVERB\n");
        let list = read_lemmas(&path).expect("valid list");
        assert_eq!(list.rows, [("Häuser".to_string(), "Haus".to_string())]);
        assert_eq!(list.without_lemma, 1);
        let (_d, path) = temp("w.tsv", "s1\t東京\t東 京\ns2\t東京\n");
        let err = read_word_gold(&path).expect_err("one bad line").to_string();
        assert!(
            err.starts_with(&format!("{}:2: expected sent_id<TAB>text<TAB>gold", path.display()))
        );
        let (_d, path) = temp("s.tsv", "s1\tHallo Welt\ns2 no tab\n");
        let err = read_sentences(&path).expect_err("one bad line").to_string();
        assert!(err.starts_with(&format!("{}:2: expected sent_id<TAB>text", path.display())));
    }

    #[test]
    fn discovery_takes_language_named_files_in_name_order() {
        let dir = tempfile::tempdir().expect("temp dir");
        let ud = dir.path().join(UD_DIR);
        std::fs::create_dir_all(&ud).expect("dir");
        for f in [
            "tr.lemmas.tsv",
            "it-pud.lemmas.tsv",
            "SOURCES.tsv",
            "xx.lemmas.tsv",
            "de.sentences.tsv",
        ] {
            std::fs::write(ud.join(f), "").expect("file");
        }
        let sets = discover(dir.path()).expect("a directory");
        let names: Vec<&str> = sets.lemma_lists.iter().map(|f| f.name.as_str()).collect();
        assert_eq!(names, ["it-pud", "tr"]);
        assert_eq!(sets.lemma_lists[0].language, LangCode::parse("it"));
        assert_eq!(sets.sentence_sets.len(), 1);
        assert!(sets.gold_sets.is_empty());
        assert!(discover(&ud.join("tr.lemmas.tsv")).is_err());
    }
}
