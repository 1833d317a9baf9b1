//! The `posts` tokenizer: post-aware tokenization that keeps `#tags`,
//! `@mentions`, URLs and emoji sequences whole and splits the rest into
//! Unicode words like [`WordTokenizer`](super::WordTokenizer).
//!
//! Place in the data flow: `analysis` stage, first element of a chain; the
//! `hashtags` and `drop` steps act on the elements it keeps whole.
//!
//! What counts as each element (a tag, mention or URL must start the text or
//! follow a character that is not a letter, digit, mark or `_`, so `C#`,
//! `ana@example.com` and `xhttp://` are not elements):
//! - `#tag`: `#` then letters, digits, marks and `_`, with at least one
//!   letter (`#2024` is not a tag; `#️⃣` is a keycap emoji).
//! - `@mention`: `@` then letters, digits, `_` and inner `.`; optionally a
//!   second `@host.tld` part as federated networks write it
//!   (`@ana@social.example`). A trailing `.` is not part of it.
//! - URL: `http://` or `https://` (any case) or `www.`, then the characters
//!   RFC 3986 (section 2) allows in a URI: unreserved `A-Z a-z 0-9 - . _ ~`,
//!   reserved `: / ? # [ ] @ ! $ & ' ( ) * + , ; =` and `%` escapes. Trailing
//!   sentence punctuation `. , ; : ! ? ' "` is cut off, and so is a closing
//!   `)` or `]` without its opening partner ("(see https://x.example/a)").
//!   Non-ASCII characters end a URL (IRIs are not recognised).
//! - Emoji: an emoji sequence as UTS #51 defines it (section 1.4): a ZWJ
//!   sequence (`👨‍👩‍👧`), a modifier sequence (`👍🏽`), a keycap (`1️⃣`), a
//!   flag (`🇩🇪`, a pair of regional indicators) or a tag sequence, one
//!   token each. UAX #29's word rules already keep exactly these together
//!   (WB3c, WB4, WB15/16), so the text between the other elements is
//!   word-segmented and the segments that start an emoji are kept too.
//!
//! Offsets are byte offsets into the original text; positions are
//! consecutive over all kinds of tokens.

use tantivy::tokenizer::{Token, TokenStream, Tokenizer};
use unicode_normalization::char::is_combining_mark;

use super::unspaced::{Segments, Unspaced};

/// Tokenizer settings for `posts`: how runs of scripts written without
/// spaces between the elements are cut ([`Unspaced`]; the default keeps
/// UAX #29 alone).
#[derive(Clone, Default, Debug)]
pub struct PostTokenizer {
    unspaced: Unspaced,
    token: Token,
}

impl PostTokenizer {
    /// The tokenizer with the given [`Unspaced`] setting.
    pub fn new(unspaced: Unspaced) -> PostTokenizer {
        PostTokenizer { unspaced, token: Token::default() }
    }
}

/// The token stream of [`PostTokenizer`].
pub struct PostTokenStream<'a> {
    text: &'a str,
    /// Where the search for the next element starts.
    pos: usize,
    /// Word segments of the text before the next element, with the byte
    /// offset of that text.
    gap: Option<(usize, Segments<'a>)>,
    /// The next element (byte range), emitted once the gap is exhausted.
    element: Option<(usize, usize)>,
    unspaced: Unspaced,
    token: &'a mut Token,
}

impl Tokenizer for PostTokenizer {
    type TokenStream<'a> = PostTokenStream<'a>;

    fn token_stream<'a>(&'a mut self, text: &'a str) -> PostTokenStream<'a> {
        self.token.reset();
        PostTokenStream {
            text,
            pos: 0,
            gap: None,
            element: None,
            unspaced: self.unspaced,
            token: &mut self.token,
        }
    }
}

impl PostTokenStream<'_> {
    fn emit(&mut self, from: usize, to: usize) {
        self.token.text.clear();
        self.token.text.push_str(self.text.get(from..to).unwrap_or_default());
        self.token.offset_from = from;
        self.token.offset_to = to;
        self.token.position = self.token.position.wrapping_add(1);
    }
}

impl TokenStream for PostTokenStream<'_> {
    fn advance(&mut self) -> bool {
        loop {
            if let Some((base, segments)) = &mut self.gap {
                let base = *base;
                if let Some((from, segment)) = segments.next() {
                    self.emit(base + from, base + from + segment.len());
                    return true;
                }
                self.gap = None;
            }
            if let Some((from, to)) = self.element.take() {
                self.emit(from, to);
                return true;
            }
            if self.pos >= self.text.len() {
                return false;
            }
            let start = self.pos;
            let (gap_end, element) = match find_element(self.text, start) {
                Some((from, to)) => (from, Some((from, to))),
                None => (self.text.len(), None),
            };
            self.pos = element.map_or(gap_end, |(_, to)| to);
            self.element = element;
            if gap_end > start {
                let gap = self.text.get(start..gap_end).unwrap_or_default();
                self.gap = Some((start, Segments::new(gap, true, self.unspaced)));
            }
        }
    }

    fn token(&self) -> &Token {
        self.token
    }

    fn token_mut(&mut self) -> &mut Token {
        self.token
    }
}

/// Letters, digits, marks and `_`: characters that glue to a word, so an
/// element cannot start right after one.
fn is_word_char(c: char) -> bool {
    c.is_alphanumeric() || c == '_' || is_combining_mark(c)
}

/// The next tag, mention or URL at or after byte `from`, as a byte range.
///
/// Every element starts with an ASCII character (`#`, `@`, `h`, `H`, `w`,
/// `W`), so the search runs over bytes (in UTF-8 an ASCII byte is always a
/// whole character) and decodes only the character before a candidate.
fn find_element(text: &str, from: usize) -> Option<(usize, usize)> {
    let bytes = text.as_bytes();
    let mut at = from;
    while let Some(offset) =
        bytes.get(at..)?.iter().position(|b| matches!(b, b'#' | b'@' | b'h' | b'H' | b'w' | b'W'))
    {
        at += offset;
        let before = text.get(..at)?;
        let boundary = match before.as_bytes().last() {
            None => true,
            Some(&b) if b.is_ascii() => !(b.is_ascii_alphanumeric() || b == b'_'),
            Some(_) => !before.chars().next_back().is_some_and(is_word_char),
        };
        if boundary {
            let rest = text.get(at..)?;
            let len = match bytes.get(at) {
                Some(b'#') => tag_len(rest),
                Some(b'@') => mention_len(rest),
                _ => url_len(rest),
            };
            if let Some(len) = len {
                return Some((at, at + len));
            }
        }
        at += 1;
    }
    None
}

/// Byte length of a `#tag` at the start of `s`.
fn tag_len(s: &str) -> Option<usize> {
    let body = s.strip_prefix('#')?;
    let end = body.find(|c: char| !is_word_char(c)).unwrap_or(body.len());
    let tag = body.get(..end)?;
    tag.chars().any(char::is_alphabetic).then_some(1 + end)
}

/// Byte length of an `@mention` (optionally `@user@host.tld`) at the start of `s`.
fn mention_len(s: &str) -> Option<usize> {
    let body = s.strip_prefix('@')?;
    let user =
        trim_trailing_dots(run_len(body, |c| c.is_alphanumeric() || c == '_' || c == '.'), body);
    if user == 0 || body.starts_with('.') {
        return None;
    }
    let mut len = 1 + user;
    if let Some(host) = body.get(user..).and_then(|r| r.strip_prefix('@')) {
        let host_len = trim_trailing_dots(
            run_len(host, |c| c.is_alphanumeric() || c == '-' || c == '.'),
            host,
        );
        let name = host.get(..host_len)?;
        if name.contains('.') && !name.starts_with('.') {
            len += 1 + host_len;
        }
    }
    Some(len)
}

/// Byte length of the longest prefix of `s` whose characters satisfy `keep`.
fn run_len(s: &str, keep: impl Fn(char) -> bool) -> usize {
    s.find(|c: char| !keep(c)).unwrap_or(s.len())
}

/// `len` shortened so that `s[..len]` does not end with `.`.
fn trim_trailing_dots(mut len: usize, s: &str) -> usize {
    while len > 0 && s.as_bytes().get(len - 1) == Some(&b'.') {
        len -= 1;
    }
    len
}

/// RFC 3986 section 2: unreserved, reserved (gen-delims and sub-delims) and
/// `%` of percent-encoding.
fn is_uri_char(b: u8) -> bool {
    b.is_ascii_alphanumeric()
        || matches!(
            b,
            b'-' | b'.'
                | b'_'
                | b'~'
                | b':'
                | b'/'
                | b'?'
                | b'#'
                | b'['
                | b']'
                | b'@'
                | b'!'
                | b'$'
                | b'&'
                | b'\''
                | b'('
                | b')'
                | b'*'
                | b'+'
                | b','
                | b';'
                | b'='
                | b'%'
        )
}

/// Byte length of a URL at the start of `s`.
fn url_len(s: &str) -> Option<usize> {
    let bytes = s.as_bytes();
    let prefix = ["https://", "http://", "www."]
        .into_iter()
        .find(|p| bytes.get(..p.len()).is_some_and(|b| b.eq_ignore_ascii_case(p.as_bytes())))?;
    let mut len = bytes.iter().position(|&b| !is_uri_char(b)).unwrap_or(bytes.len());
    // Cut trailing sentence punctuation and unbalanced closing brackets.
    while let Some(&last) = bytes.get(len.checked_sub(1)?) {
        let body = bytes.get(..len)?;
        let unbalanced = |open: u8, close: u8| {
            last == close
                && body.iter().filter(|&&b| b == close).count()
                    > body.iter().filter(|&&b| b == open).count()
        };
        if matches!(last, b'.' | b',' | b';' | b':' | b'!' | b'?' | b'\'' | b'"')
            || unbalanced(b'(', b')')
            || unbalanced(b'[', b']')
        {
            len -= 1;
        } else {
            break;
        }
    }
    // Something must follow the scheme or `www.`, starting with a host character.
    let host_start = bytes.get(prefix.len()).copied()?;
    (len > prefix.len() && host_start.is_ascii_alphanumeric()).then_some(len)
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::TextAnalyzer;

    use super::*;
    use crate::analysis::testutil::{assert_tokens, texts};

    fn analyzer() -> TextAnalyzer {
        TextAnalyzer::from(PostTokenizer::default())
    }

    #[test]
    fn post_elements_whole_with_offsets() {
        assert_tokens(
            &mut analyzer(),
            "Fresh fish at #HarbourMarket, thanks @ana! https://example.com/m?id=1. 👍🏽",
            &[
                ("Fresh", 0, 0, 5),
                ("fish", 1, 6, 10),
                ("at", 2, 11, 13),
                ("#HarbourMarket", 3, 14, 28),
                ("thanks", 4, 30, 36),
                ("@ana", 5, 37, 41),
                ("https://example.com/m?id=1", 6, 43, 69),
                ("👍🏽", 7, 71, 79),
            ],
        );
    }

    #[test]
    fn tags_need_a_letter_and_a_boundary() {
        assert_eq!(
            texts(&mut analyzer(), "#2024 C# x#y #café_au_lait #हिन्दी"),
            ["2024", "C", "x", "y", "#café_au_lait", "#हिन्दी"]
        );
    }

    #[test]
    fn mentions() {
        assert_eq!(
            texts(&mut analyzer(), "@ana.b. @ana@social.example, mail ana@example.com @@ @_x"),
            ["@ana.b", "@ana@social.example", "mail", "ana", "example.com", "@_x"]
        );
        // A second @ without a dotted host is not part of the mention.
        assert_eq!(texts(&mut analyzer(), "@ana@home"), ["@ana", "home"]);
    }

    /// URI examples of RFC 3986 (only http, https and www. URLs are
    /// recognised), with sentence punctuation around them.
    #[test]
    fn urls_per_rfc_3986() {
        // RFC 3986 section 1.1.2: "http://www.ietf.org/rfc/rfc2396.txt".
        assert_eq!(
            texts(&mut analyzer(), "see http://www.ietf.org/rfc/rfc2396.txt."),
            ["see", "http://www.ietf.org/rfc/rfc2396.txt"]
        );
        // RFC 3986 section 3: "foo://example.com:8042/over/there?name=ferret#nose"
        // with the scheme http: port, query and fragment are kept.
        assert_eq!(
            texts(&mut analyzer(), "(HTTP://example.com:8042/over/there?name=ferret#nose)"),
            ["HTTP://example.com:8042/over/there?name=ferret#nose"]
        );
        // Balanced parentheses stay; percent-encoding stays; "!" and "?" at the end go.
        assert_eq!(
            texts(&mut analyzer(), "www.example.org/wiki/Foo_(bar) https://a.example/%C3%A9?! ok"),
            ["www.example.org/wiki/Foo_(bar)", "https://a.example/%C3%A9", "ok"]
        );
        // Non-ASCII ends a URL; a bare scheme is not a URL.
        assert_eq!(
            texts(&mut analyzer(), "https://ex.example/caf\u{e9} http:// www."),
            ["https://ex.example/caf", "\u{e9}", "http", "www"]
        );
    }

    /// Emoji sequences from UTS #51 (Unicode Technical Standard #51, section
    /// 1.4 and its examples): one token each.
    #[test]
    fn emoji_sequences_per_uts_51() {
        let family = "\u{1F468}\u{200D}\u{1F469}\u{200D}\u{1F467}"; // ZWJ sequence (1.4.4)
        let thumbs = "\u{1F44D}\u{1F3FD}"; // modifier sequence (1.4.1)
        let keycap = "1\u{FE0F}\u{20E3}"; // keycap sequence (1.4.6)
        let flag = "\u{1F1E9}\u{1F1EA}"; // flag sequence DE (1.4.5)
        let england = "\u{1F3F4}\u{E0067}\u{E0062}\u{E0065}\u{E006E}\u{E0067}\u{E007F}"; // tag sequence (1.4.5)
        let heart = "\u{2764}\u{FE0F}"; // presentation sequence (1.4.3)
        let text = format!("{family}{thumbs} {keycap}{flag}{flag}{england}love{heart}");
        assert_eq!(
            texts(&mut analyzer(), &text),
            [family, thumbs, keycap, flag, flag, england, "love", heart]
        );
    }

    #[test]
    fn plain_words_like_words_tokenizer() {
        assert_tokens(
            &mut analyzer(),
            "Grüße aus Köln",
            &[("Grüße", 0, 0, 7), ("aus", 1, 8, 11), ("Köln", 2, 12, 17)],
        );
        assert_tokens(&mut analyzer(), "", &[]);
        assert_tokens(&mut analyzer(), "#", &[]);
    }

    /// The char-by-char search this file used before the byte search: every
    /// char, with a boundary test on the char before it.
    fn find_element_by_chars(text: &str, from: usize) -> Option<(usize, usize)> {
        let mut prev = text.get(..from)?.chars().next_back();
        for (i, c) in text.get(from..)?.char_indices() {
            let at = from + i;
            let boundary = !prev.is_some_and(is_word_char);
            prev = Some(c);
            if !boundary {
                continue;
            }
            let rest = text.get(at..)?;
            let len = match c {
                '#' => tag_len(rest),
                '@' => mention_len(rest),
                'h' | 'H' | 'w' | 'W' => url_len(rest),
                _ => None,
            };
            if let Some(len) = len {
                return Some((at, at + len));
            }
        }
        None
    }

    /// The byte search finds the same elements as the char search on random
    /// texts built from element pieces, letters of several scripts, marks
    /// and punctuation (fixed seed), from every char boundary.
    #[test]
    fn byte_search_equals_char_search() {
        use rand::{Rng, SeedableRng};
        let pieces = [
            "#",
            "@",
            "h",
            "H",
            "w",
            "W",
            "http://",
            "https://",
            "www.",
            "x.example",
            "tag",
            "_",
            ".",
            " ",
            "é",
            "\u{301}",
            "\u{93e}",
            "ж",
            "東",
            "😀",
            "1",
            "(",
            ")",
            "!",
        ];
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(51);
        for _ in 0..20_000 {
            let n = rng.gen_range(0..10);
            let text: String = (0..n).map(|_| pieces[rng.gen_range(0..pieces.len())]).collect();
            for (from, _) in text.char_indices() {
                assert_eq!(
                    find_element(&text, from),
                    find_element_by_chars(&text, from),
                    "{text:?} from {from}"
                );
            }
        }
    }
}
