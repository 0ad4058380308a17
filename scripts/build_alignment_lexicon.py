"""Build the word-pair lists of the default word aligner from FreeDict bilingual dictionaries.

The dictionaries install from Debian's package archive (`apt-get install dict-freedict-spa-eng ...`, see the
Makefile's `alignment-lexicon` target); they are read from /usr/share/dictd or the folder given. For every
language pair in PAIRS, both directions' dictionaries are read, and each headword of one word is paired with
each one-word translation (leading infinitive markers and articles removed), lower-cased. The output, one
`source<TAB>target` pair a line in the pair's own order (English second), sorted, is written to
src/gendertrace/link/lexicons/<a>-<b>.tsv. Only word pairs are kept: no example, note or sentence of the
dictionaries is copied. The FreeDict dictionaries are under the GNU GPL (version 2 or later); the header of
each output file says so and names the dictionaries it came from.

Run: python scripts/build_alignment_lexicon.py [DICTD_FOLDER]
"""

from __future__ import annotations

import gzip
import re
import sys
from pathlib import Path

# (our pair, FreeDict code of the first language); English is always the second language.
PAIRS = {"es-en": "spa", "fr-en": "fra", "it-en": "ita", "pt-en": "por", "de-en": "deu"}
OUT = Path(__file__).resolve().parents[1] / "src" / "gendertrace" / "link" / "lexicons"
# Words dropped at the start of a translation ("to eat", "the house", "la maison").
LEADING = {"to", "the", "a", "an", "el", "la", "los", "las", "le", "les", "l'", "un", "une", "una", "uno", "der",
           "die", "das", "ein", "eine", "il", "lo", "gli", "i", "o", "os", "as", "um", "uma", "sich", "se"}
# German FreeDict lists hundreds of thousands of compounds: only pairs whose English word the other pairs' lists
# also know, and whose German word has at most CAPPED_LENGTH letters, are kept, so that the file stays small and
# holds the common vocabulary.
CAPPED = {"de-en"}
CAPPED_LENGTH = 10
B64 = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/"
WORD = re.compile(r"^[^\W\d_](?:[\w'’-]*\w)?$")


def _b64(s: str) -> int:
    n = 0
    for c in s:
        n = n * 64 + B64.index(c)
    return n


def entries(folder: Path, code: str) -> list[tuple[str, list[str]]]:
    """(headword, translation lines) of one FreeDict dictionary, in index order."""
    data = gzip.open(folder / f"freedict-{code}.dict.dz").read()
    out = []
    for line in (folder / f"freedict-{code}.index").read_text(encoding="utf-8").splitlines():
        head, off, length = line.split("\t")
        if head.startswith("00database"):
            continue
        body = data[_b64(off):_b64(off) + _b64(length)].decode("utf-8", "replace").splitlines()
        out.append((head, body[1:]))
    return out


def _clean(text: str) -> list[str]:
    """The one-word translations of one line of an entry."""
    text = re.sub(r"\[[^\]]*\]|<[^>]*>|\([^)]*\)|/[^/]*/|\{[^}]*\}", " ", text)
    text = re.sub(r"^\s*\d+\.\s*", "", text)
    words = []
    for part in re.split(r"[,;]", text):
        toks = part.strip().lower().split()
        while len(toks) > 1 and toks[0] in LEADING:
            toks = toks[1:]
        if len(toks) == 1 and WORD.match(toks[0]):
            words.append(toks[0])
    return words


def pairs_of(folder: Path, code: str, reverse: bool) -> set[tuple[str, str]]:
    """Word pairs of one dictionary as (first language, English)."""
    out = set()
    for head, body in entries(folder, code):
        head = head.strip().lower()
        if not WORD.match(head):
            continue
        for line in body:
            stripped = line.strip()
            if not stripped or stripped.startswith(("Synonym", "see:", "Note", "Usage", "Example", "\"")):
                continue
            for w in _clean(stripped):
                out.add((w, head) if reverse else (head, w))
    return out


def main(folder: Path) -> None:
    OUT.mkdir(parents=True, exist_ok=True)
    built: dict[str, set[tuple[str, str]]] = {}
    for pair, code in PAIRS.items():
        if pair in CAPPED:
            continue
        built[pair] = pairs_of(folder, f"{code}-eng", False) | pairs_of(folder, f"eng-{code}", True)
    known_english = {e for ps in built.values() for _, e in ps}
    for pair in CAPPED:
        code = PAIRS[pair]
        every = pairs_of(folder, f"{code}-eng", False) | pairs_of(folder, f"eng-{code}", True)
        built[pair] = {(a, e) for a, e in every if e in known_english and len(a) <= CAPPED_LENGTH}
    for pair, ps in sorted(built.items()):
        code = PAIRS[pair]
        header = (f"# Word pairs {pair} for the default word aligner, built by scripts/build_alignment_lexicon.py\n"
                  f"# from the FreeDict dictionaries freedict-{code}-eng and freedict-eng-{code} (Debian packages\n"
                  f"# dict-freedict-{code}-eng, dict-freedict-eng-{code}; GNU GPL version 2 or later).\n"
                  f"# Word pairs only.\n")
        body = "".join(f"{a}\t{e}\n" for a, e in sorted(ps))
        (OUT / f"{pair}.tsv").write_text(header + body, encoding="utf-8")
        print(f"{pair}: {len(ps)} pairs")


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else Path("/usr/share/dictd"))
