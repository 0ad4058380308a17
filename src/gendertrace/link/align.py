"""Word alignment of each segment pair: the anchored links, merged with a statistical aligner's links.

The statistical aligner is the Scorer's hook. By default it is the fixed word-pair model of
`gendertrace.link.wordpairs` (deterministic, each segment on its own); `statistical_alignments` below is the opt-in
eflomal sampler trained on the batch itself, which needs data: on a batch of fewer than MIN_STATISTICAL segments it
is skipped and the anchors (identical words, the person-noun lexicon, pronoun correspondences) and a positional
fallback for verbs carry the linking alone.
"""

from __future__ import annotations

import bisect
import logging
import math
import os
import tempfile
from collections.abc import Callable, Iterator, Sequence
from contextlib import contextmanager, nullcontext

from gendertrace.matching import max_weight_matching
from gendertrace.model import ParsedText

log = logging.getLogger(__name__)

MIN_STATISTICAL = 60
# With a priors file the sampler starts from learned counts and needs fewer iterations: at 0.2 of eflomal's
# default schedule, priors learned on the other half of the treebank gave links that agree with a reference
# alignment (three samplers, the whole treebank in one batch) better than the uninformed default schedule
# does on the same half (link F1 0.835 against 0.825 for es-en, 0.834 against 0.822 for en-es, three runs
# each), in 30% of its time; at 0.15 the agreement falls to the default's (docs/benchmarks.md, scale section).
PRIORS_REL_ITERATIONS = 0.2
# eflomal's own schedule without priors (its iteration counts grow as the batch shrinks).
DEFAULT_REL_ITERATIONS = 1.0
Alignment = frozenset[tuple[int, int]]  # (source token index, target token index)
# How much a pronoun pair's score loses per unit of relative-position difference (0 to 1 across the segment).
POSITION_WEIGHT = 3.5
# Pronouns (on the smaller side) of one segment up to which the pronoun pairing is solved exactly.
MAX_EXACT = 60
# Tokens on either side of a source word's diagonal position within which anchors are sought.
ANCHOR_BAND = 100


def _words(p: ParsedText) -> list[str]:
    return [t.text.lower().replace(" ", "_") or "_" for t in p.tokens]


def statistical_alignments(
    sources: Sequence[ParsedText],
    targets: Sequence[ParsedText],
    *,
    priors: str | None = None,
    threads: int | None = None,
    on_links: LinksHook | None = None,
    rel_iterations: float | None = None,
    samplers: int = 1,
) -> list[Alignment] | None:
    """Symmetrised eflomal alignments for every pair, or None when eflomal is unavailable or the batch too small.

    Hooks for scaled runs (gendertrace.scale), all off by default: `priors` is an eflomal priors file that
    informs the sampler (with it, batches smaller than MIN_STATISTICAL are aligned too); `threads` bounds
    eflomal's OpenMP threads; `on_links` receives the words and raw links of the batch (to learn priors from);
    `rel_iterations` scales eflomal's iteration schedule (default 1.0, or PRIORS_REL_ITERATIONS with priors);
    `samplers` is eflomal's number of parallel samplers (one by default: a third of the time of eflomal's
    default three, at no measured loss).
    """
    if not sources or (len(sources) < MIN_STATISTICAL and priors is None):
        return None
    try:
        import eflomal
    except ImportError:  # pragma: no cover - eflomal is a core dependency; kept for partial installs
        log.warning("eflomal not importable: falling back to anchored alignment")
        return None
    src = [" ".join(_words(p)) or "_" for p in sources]
    tgt = [" ".join(_words(p)) or "_" for p in targets]
    with tempfile.TemporaryDirectory() as tmp:
        fwd, rev = os.path.join(tmp, "fwd"), os.path.join(tmp, "rev")
        # eflomal seeds its sampler from the operating system, so links can differ slightly between runs; the
        # anchored links (names, lexicon, pronouns) that decide most person links are deterministic.
        prior_input = open(priors, encoding="utf-8") if priors else nullcontext()
        with _omp_threads(threads), prior_input as prior_file:
            if rel_iterations is None:
                rel_iterations = PRIORS_REL_ITERATIONS if priors else DEFAULT_REL_ITERATIONS
            aligner = eflomal.Aligner(n_samplers=samplers, rel_iterations=rel_iterations)
            aligner.align(src, tgt, links_filename_fwd=fwd, links_filename_rev=rev, quiet=True,
                          priors_input=prior_file)
        with open(fwd, encoding="utf-8") as f_fwd, open(rev, encoding="utf-8") as f_rev:
            fwd_lines, rev_lines = f_fwd.read().splitlines(), f_rev.read().splitlines()
    if on_links is not None:
        on_links(src, tgt, fwd_lines, rev_lines)
    out = []
    for k in range(len(sources)):
        a = _parse_links(fwd_lines[k] if k < len(fwd_lines) else "")
        b = _parse_links(rev_lines[k] if k < len(rev_lines) else "")
        out.append(symmetrise(a, b))
    return out


# ----------------------------------------------------------------------------------------------------
# Hooks for scaled runs (used by gendertrace.scale; the defaults above do not depend on them)

LinksHook = Callable[[list[str], list[str], list[str], list[str]], None]


def alignment_words(p: ParsedText) -> list[str]:
    """The words eflomal sees for one segment side; priors files are written in the same vocabulary."""
    return _words(p)


@contextmanager
def _omp_threads(threads: int | None) -> Iterator[None]:
    """Bound the OpenMP threads of the eflomal binary (a child process reads it from the environment)."""
    if threads is None:
        yield
        return
    before = os.environ.get("OMP_NUM_THREADS")
    os.environ["OMP_NUM_THREADS"] = str(threads)
    try:
        yield
    finally:
        if before is None:
            os.environ.pop("OMP_NUM_THREADS", None)
        else:
            os.environ["OMP_NUM_THREADS"] = before


# ----------------------------------------------------------------------------------------------------


def _parse_links(line: str) -> set[tuple[int, int]]:
    links = set()
    for item in line.split():
        i, j = item.split("-")
        links.add((int(i), int(j)))
    return links


def symmetrise(fwd: set[tuple[int, int]], rev: set[tuple[int, int]]) -> Alignment:
    """Intersection, grown with union links next to it or on otherwise unaligned words (grow-diag in spirit)."""
    inter = fwd & rev
    union = fwd | rev
    out = set(inter)
    src_done = {i for i, _ in out}
    tgt_done = {j for _, j in out}
    for i, j in sorted(union - inter):
        # A link next to one already taken (the eight neighbouring cells), looked up rather than scanned.
        near = any((i + di, j + dj) in out for di in (-1, 0, 1) for dj in (-1, 0, 1))
        if near or i not in src_done or j not in tgt_done:
            out.add((i, j))
            src_done.add(i)
            tgt_done.add(j)
    return frozenset(out)


def anchor_alignment(
    src: ParsedText,
    tgt: ParsedText,
    lexicon: dict[str, frozenset[str]],
    pronoun_pairs: dict[tuple[str, str], float],
    src_rules=None,
    tgt_rules=None,
) -> tuple[Alignment, Alignment]:
    """Anchored links as (strong, weak).

    strong: identical words (names, numbers), person nouns via the lexicon, and pronouns paired one to one
    (best-scoring pairs first: same type, case and gender score higher, and the difference of relative
    positions counts against the score, POSITION_WEIGHT per unit);
    weak: each target verb to the source verb at the nearest relative position in the segment.
    With the languages' rules given, impersonal pronouns ("il faut", "it seems") are never paired.
    In a segment longer than 2 x ANCHOR_BAND tokens, a source word is compared only with the target words within
    ANCHOR_BAND tokens of its diagonal position, so the cost grows linearly with the segment.
    """
    from gendertrace.mentions.extract import is_expletive
    from gendertrace.rules.loader import pronoun_key

    def impersonal(parsed: ParsedText, rules) -> set[int]:
        if rules is None:
            return set()
        return {t.i for t in parsed.tokens if t.upos == "PRON" and is_expletive(parsed, t, rules)}

    links = set()
    src_impersonal, tgt_impersonal = impersonal(src, src_rules), impersonal(tgt, tgt_rules)
    s_toks, t_toks = src.tokens, tgt.tokens
    ns, nt = max(len(s_toks), 1), max(len(t_toks), 1)
    # Target positions by lower-cased form, and the pronoun-like target tokens with their keys, each in order.
    by_form: dict[str, list[int]] = {}
    t_prons: list[tuple[int, str]] = []
    for t in t_toks:
        if t.upos == "PUNCT":
            continue
        tl = t.text.lower()
        by_form.setdefault(tl, []).append(t.i)
        if _pronoun_like(t) and t.i not in tgt_impersonal:
            t_prons.append((t.i, pronoun_key(tl)))
    t_pron_pos = [j for j, _ in t_prons]

    def window(i: int) -> tuple[int, int]:
        centre = i * nt / ns
        return math.floor(centre - ANCHOR_BAND), math.ceil(centre + ANCHOR_BAND)

    pron_cands = []
    for s in s_toks:
        if s.upos == "PUNCT":
            continue
        lo, hi = window(s.i)
        sl = s.text.lower()
        forms = set(lexicon.get(sl, ()))
        if s.upos in ("PROPN", "NUM") or len(sl) > 3:
            forms.add(sl)
        for form in forms:
            positions = by_form.get(form, ())
            for k in range(bisect.bisect_left(positions, lo), bisect.bisect_right(positions, hi)):
                links.add((s.i, positions[k]))
        if not _pronoun_like(s) or s.i in src_impersonal:
            continue
        s_key = pronoun_key(sl)
        for k in range(bisect.bisect_left(t_pron_pos, lo), bisect.bisect_right(t_pron_pos, hi)):
            j, t_key = t_prons[k]
            score = pronoun_pairs.get((s_key, t_key))
            if score is None or (s.i, j) in links:
                continue
            # Position counts against the score: a same-gender pronoun across the sentence must not win over
            # the pronoun in the same place ("..., he says" / "..., affirme-t-elle").
            dist = abs(s.i / ns - j / nt)
            pron_cands.append((-(score - POSITION_WEIGHT * dist), dist, s.i, j))
    links |= _best_pairing(pron_cands)
    # Verbs by relative position: a weak fallback used only where no other link covers the verb.
    weak = set()
    s_verbs = [s.i for s in s_toks if s.upos in ("VERB", "AUX")]
    t_verbs = [t.i for t in t_toks if t.upos in ("VERB", "AUX")]
    if len(s_verbs) == 1 and len(t_verbs) == 1:
        weak.add((s_verbs[0], t_verbs[0]))  # one verb on each side: they translate each other
    elif s_verbs and t_verbs:
        s_rel = [i / ns for i in s_verbs]
        for j in t_verbs:
            rel = j / nt
            k = bisect.bisect_left(s_rel, rel)
            # The nearest source verb, the earlier one on a tie.
            near = [c for c in (k - 1, k) if 0 <= c < len(s_rel)]
            best = min(near, key=lambda c: (abs(s_rel[c] - rel), c))
            if abs(s_rel[best] - rel) < 0.2:
                weak.add((s_verbs[best], j))
    return frozenset(links), frozenset(weak)


def _best_pairing(cands: list[tuple[float, float, int, int]]) -> set[tuple[int, int]]:
    """One-to-one pronoun pairs with the best total score (an assignment problem, solved exactly by the Hungarian
    method): a greedy choice would give "he" the "il" about a thing and leave "it" and "-elle" unpaired. Beyond
    MAX_EXACT pronouns on the smaller side (far more than a paragraph has) pairs are chosen greedily, best first."""
    if not cands:
        return set()
    src_ids = sorted({i for _, _, i, _ in cands})
    tgt_ids = sorted({j for _, _, _, j in cands})
    if min(len(src_ids), len(tgt_ids)) > MAX_EXACT:
        out, used_s, used_t = set(), set(), set()
        for _, _, i, j in sorted(cands):
            if i not in used_s and j not in used_t:
                out.add((i, j))
                used_s.add(i)
                used_t.add(j)
        return out
    offset = POSITION_WEIGHT + 4.0  # every candidate pair weighs more than no pair
    weight: dict[tuple[int, int], float] = {}
    for neg_score, _, i, j in cands:
        weight[(i, j)] = max(weight.get((i, j), 0.0), offset - neg_score)
    rows, cols = (src_ids, tgt_ids) if len(src_ids) <= len(tgt_ids) else (tgt_ids, src_ids)
    flipped = rows is tgt_ids
    table = [[weight.get((c, r) if flipped else (r, c), 0.0) for c in cols] for r in rows]
    out = set()
    for r, c in max_weight_matching(table):
        pair = (cols[c], rows[r]) if flipped else (rows[r], cols[c])
        if pair in weight:
            out.add(pair)
    return out


def _pronoun_like(t) -> bool:
    """A pronoun, or a possessive determiner; not an article that shares a pronoun's form ("la", "le")."""
    return t.upos == "PRON" or (t.upos == "DET" and t.feat("Poss") == "Yes")


def merge(statistical: Alignment | None, strong: Alignment, weak: Alignment) -> Alignment:
    """Strong anchors win for the target words they cover, statistical links fill in the rest, and weak
    anchors only the target words still unaligned."""
    out = set(strong)
    covered = {j for _, j in out}
    out |= {(i, j) for i, j in (statistical or ()) if j not in covered}
    covered = {j for _, j in out}
    out |= {(i, j) for i, j in weak if j not in covered}
    return frozenset(out)
