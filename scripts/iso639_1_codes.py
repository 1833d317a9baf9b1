"""Write the ISO 639-1 (two-letter) language codes, sorted, one a line.

Source: the ISO 639-3 code table as shipped by the PyPI package pycountry
(26.2.16), whose `alpha_2` field is the Part 1 code of a language. That table
has 184 codes: the 183 current ISO 639-1 codes plus `sh` (Serbo-Croatian,
withdrawn from Part 1 in 2000 but still listed as the Part 1 code of `hbs`).
It does not have `bh` (Bihari), withdrawn by the ISO 639-2 registration
authority. `src/input/lang_code.rs` embeds the same list; its tests read the
output of this script:

    pip install pycountry==26.2.16
    python3 scripts/iso639_1_codes.py > tests/fixtures/input/iso639_1_codes.txt
"""

import pycountry

codes = sorted(lang.alpha_2 for lang in pycountry.languages if hasattr(lang, "alpha_2"))
for code in codes:
    print(code)
