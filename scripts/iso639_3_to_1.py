"""Write `alpha_3<TAB>alpha_2` for every language of the ISO 639-3 code table
that has an ISO 639-1 (two-letter) code, sorted by alpha_3.

Source: the ISO 639-3 code table as shipped by the PyPI package pycountry
(26.2.16). `src/analysis/detect.rs` maps whatlang's ISO 639-3 codes to ISO
639-1 with a table; its tests check every pair against this output:

    pip install pycountry==26.2.16
    python3 scripts/iso639_3_to_1.py > tests/fixtures/analysis/detect/iso639_3_to_1.tsv
"""

import pycountry

pairs = sorted(
    (lang.alpha_3, lang.alpha_2) for lang in pycountry.languages if hasattr(lang, "alpha_2")
)
for alpha_3, alpha_2 in pairs:
    print(f"{alpha_3}\t{alpha_2}")
