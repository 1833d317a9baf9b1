"""Write the expected output of the `fold` step with `form = "compatibility"`
for a list of words: fullwidth letters, ligatures, superscripts, letterlike
symbols, Roman numerals, circled and squared letters, long s, Greek final
sigma and iota subscript, and accented words.

Reference: Python's own `unicodedata` (the normalization forms of UAX #15)
and `str.casefold` (full case folding, CaseFolding.txt), the standard
library only. The expected value of a word is computed as the step is
documented (src/analysis/fold.rs): compatibility decomposition (NFKD), full
case folding, NFKD again, then every combining mark (general category M*)
that follows a Latin or Greek letter is dropped (a letter is Latin or Greek
by its Unicode character name here, an independent test of the code-point
ranges the step uses), then canonical composition (NFC). That is NFKC with
case folding (the NFKC_Casefold practice of UAX #15 / UTS #46) plus the
accent removal every `fold` does.

Words with the letters `fold` maps by an explicit table (ß is also case
folded to ss, so it is in; æ ø ł đ ð þ ı ħ ŧ are not, having no
decomposition) and Cyrillic words (whose breve `fold` keeps) are left out.

    python3 scripts/fold_compat_fixture.py > tests/fixtures/analysis/fold_compat.json
"""

import json
import sys
import unicodedata

WORDS = [
    "ｆｕｌｌ",          # fullwidth small letters
    "ＦＵＬＬ",          # fullwidth capital letters
    "Ｃａｆé",           # fullwidth with a precomposed accent
    "ﬁle",              # U+FB01 LATIN SMALL LIGATURE FI
    "ﬂow",              # U+FB02 fl
    "oﬀer",             # U+FB00 ff
    "oﬃce",             # U+FB03 ffi
    "ﬆop",              # U+FB06 st
    "Ǆemal",            # U+01C4 DŽ (compatibility: D, Z, caron)
    "Ĳssel",            # U+0132 IJ
    "x²",               # superscript two
    "№5",               # numero sign
    "ℌello",            # black-letter capital H
    "Ⅻ",                # Roman numeral twelve
    "ⓐⓑ",               # circled small letters
    "㎏",                # square kg
    "ſtraße",           # long s, sharp s
    "STRASSE",
    "λόγος",            # Greek final sigma, tonos
    "ᾳδω",              # alpha with iota subscript (ypogegrammeni)
    "İstanbul",         # capital I with dot above
    "Crème",
    "ＲＥＳＵＭÉ",
    "naïve",
    "ｎｉñｏ",
]


def is_latin_or_greek(c):
    name = unicodedata.name(c, "")
    return name.startswith("LATIN ") or name.startswith("GREEK ")


def fold_compatibility(word):
    text = unicodedata.normalize("NFKD", unicodedata.normalize("NFKD", word).casefold())
    out = []
    base_drops = False
    for c in text:
        if unicodedata.category(c).startswith("M"):
            if not base_drops:
                out.append(c)
            continue
        base_drops = is_latin_or_greek(c)
        out.append(c)
    return unicodedata.normalize("NFC", "".join(out))


json.dump(
    {
        "source": "Python %s unicodedata (Unicode %s) and str.casefold"
        % (sys.version.split()[0], unicodedata.unidata_version),
        "cases": [{"input": w, "expected": fold_compatibility(w)} for w in WORDS],
    },
    sys.stdout,
    ensure_ascii=False,
    indent=1,
)
sys.stdout.write("\n")
