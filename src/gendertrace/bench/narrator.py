"""The narrator benchmark: recall on gender errors found by reading real engine output, and injected flips of
first-person agreement words on the professional reference.

Data: the real MT development folder (`../shared/wmt24-en-es-dev` beside the treebank folder, read at run
time), one JSONL file per engine and `reference.jsonl`, English sources and Spanish targets aligned line by
line. The list `corpora/judgements/en-es-person-errors.tsv` holds every gender error about a person that a
bilingual post-editor found reading every paragraph of two engines' output, keyed by system, document,
segment and target offsets, and apart from them (`kind` assumption) the words where the English gives no clue
to a speaker's or addressee's gender and the Spanish picks one. Columns (tab-separated, one header row):

- system, doc_id, seg_id: the engine file and the segment;
- start, end, text: code-point offsets into the segment's target, end exclusive (`text == target[start:end]`);
- kind: `error` (the gender is wrong for the person given the whole English document) or `assumption`;
- expected, found: fem, masc or neutral (`expected` is empty for an assumption);
- who: `narrator` (a first-person speaker), `addressee` (the person spoken to) or `third`;
- cue, where the English shows the gender: `sentence`, `paragraph` (another sentence of the segment),
  `document` (another segment), `name` (a name only), `emoji`, or `none`;
- certainty: `clear`, or `likely` where the reading rests on an inference a second reader may not share;
- note: the reader's reason, in their own words.

The list covers every paragraph of the two engines, so a contradiction or inconsistency finding there that
overlaps no error row is a false finding. An error is caught when such a finding overlaps its characters in
the same system, document and segment. Every figure is given without and with the first-name policy
(`first_names: package`, docs/entities.md), since a name is weak, opt-in evidence.

The injected part flips, one copy of the reference document at a time, a first-person agreement word chosen by
the rules of `gendertrace.bench.firstperson`, and sorts each flip by the evidence against it: the English
shows the narrator's gender in a word (`word`), or only by a name they give (`name`, counted under the
first-name policy only), or the reference itself has another first-person agreement word of the original
gender and none of the other (`target`: the flip leaves the narrator with two genders), or nothing (`none`:
the flip is another default choice, not an error). Recall counts the copies where a contradiction or
inconsistency overlaps the flipped span; precision counts, of the flagging findings a copy has that the
unflipped reference did not, those on the flipped span.

The section names systems, documents, segments, words and counts only: no sentence of the data enters it.
"""

from __future__ import annotations

import csv
import sys
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path

from gendertrace.bench.firstperson import (
    FlipSite,
    apply_flip,
    flip_sites,
    name_cues,
    narrator_gender,
    word_cues,
)
from gendertrace.errors import InputError
from gendertrace.model import Document, DocumentResult, ParsedDocument
from gendertrace.rules import LanguageRules

COLUMNS = ("system", "doc_id", "seg_id", "start", "end", "text", "kind", "expected", "found", "who", "cue",
           "certainty", "note")
KINDS = ("error", "assumption")
GENDERS = ("fem", "masc", "neutral")
WHO = ("narrator", "addressee", "third")
CUES = ("sentence", "paragraph", "document", "name", "emoji", "none")
WORD_CUES = ("sentence", "paragraph", "document")
CERTAINTIES = ("clear", "likely")
SYSTEMS = ("GPT-4", "ONLINE-G")
REFERENCE = "reference"
FLAGGING = ("contradiction", "inconsistency")
FLIP_EVIDENCE = ("word", "name", "target", "none")
POLICIES = ("first names off", "first names on")


@dataclass(frozen=True)
class PersonError:
    """One row of the list: a gendered target word about a person, judged by reading."""

    system: str
    doc_id: str
    seg_id: str
    start: int
    end: int
    text: str
    kind: str
    expected: str
    found: str
    who: str
    cue: str
    certainty: str
    note: str

    @property
    def word_cue(self) -> bool:
        """The English shows the gender in its words (not by a name or an emoji only)."""
        return self.cue in WORD_CUES


@dataclass(frozen=True)
class Flag:
    """A finding reduced to what the benchmark compares: where it is, its kind, and whether it is about the
    first person (its entity has a first-person singular mention on either side)."""

    system: str
    doc_id: str
    seg_id: str
    start: int
    end: int
    kind: str
    first_person: bool
    text: str = ""


def repository_root() -> Path:
    return Path(__file__).resolve().parents[3]


def errors_path() -> Path:
    """The list kept in the repository (corpora/judgements/en-es-person-errors.tsv)."""
    return repository_root() / "corpora" / "judgements" / "en-es-person-errors.tsv"


def default_data_dir() -> Path:
    """The real MT development folder: `../shared/wmt24-en-es-dev` relative to the repository root."""
    return repository_root().parent / "shared" / "wmt24-en-es-dev"


def _choice(path: Path, lineno: int, column: str, value: str, allowed: Sequence[str], empty: bool = False) -> str:
    if value in allowed or (empty and value == ""):
        return value
    raise InputError(str(path), lineno, f"{column} {value!r} is not one of {', '.join(allowed)}")


def load_person_errors(path: str | Path) -> list[PersonError]:
    """Read the list (TSV with a header row of COLUMNS).

    Raises InputError naming the file and line for a wrong header, a short row, a value outside its column's
    vocabulary, offsets that are not numbers or do not span the text's length, or the same span listed twice.
    """
    path = Path(path)
    out: list[PersonError] = []
    seen: set[tuple[str, str, str, int, int]] = set()
    try:
        handle = open(path, encoding="utf-8", newline="")
    except OSError as exc:
        raise InputError(str(path), None, f"cannot read the error list: {exc.strerror}") from exc
    with handle:
        rows = csv.reader(handle, delimiter="\t", quoting=csv.QUOTE_NONE)
        header = next(rows, None)
        if header is None or tuple(header) != COLUMNS:
            raise InputError(str(path), 1, f"header should be {' '.join(COLUMNS)}")
        for lineno, row in enumerate(rows, 2):
            if not row:
                continue
            if len(row) != len(COLUMNS):
                raise InputError(str(path), lineno, f"{len(row)} columns, expected {len(COLUMNS)}")
            system, doc_id, seg_id, start, end, text, kind, expected, found, who, cue, certainty, note = row
            if not (start.isdigit() and end.isdigit()) or int(end) - int(start) != len(text):
                raise InputError(str(path), lineno, f"offsets {start}-{end} do not span {text!r}")
            kind = _choice(path, lineno, "kind", kind, KINDS)
            _choice(path, lineno, "expected", expected, GENDERS, empty=kind == "assumption")
            _choice(path, lineno, "found", found, GENDERS)
            _choice(path, lineno, "who", who, WHO)
            _choice(path, lineno, "cue", cue, CUES)
            _choice(path, lineno, "certainty", certainty, CERTAINTIES)
            key = (system, doc_id, seg_id, int(start), int(end))
            if key in seen:
                raise InputError(str(path), lineno, f"the span {start}-{end} of {system} {doc_id} [{seg_id}] "
                                 "is listed twice")
            seen.add(key)
            out.append(PersonError(system, doc_id, seg_id, int(start), int(end), text, kind, expected, found,
                                   who, cue, certainty, note))
    return out


def offset_problems(errors: Iterable[PersonError], targets: Mapping[tuple[str, str, str], str]) -> list[str]:
    """Rows whose text is not found at their offsets in the segment target (`targets` maps system, doc_id and
    seg_id to the target string); an empty list when every row checks."""
    problems = []
    for e in errors:
        target = targets.get((e.system, e.doc_id, e.seg_id))
        if target is None:
            problems.append(f"{e.system} {e.doc_id} [{e.seg_id}]: no such segment")
        elif target[e.start:e.end] != e.text:
            problems.append(f"{e.system} {e.doc_id} [{e.seg_id}] {e.start}-{e.end}: "
                            f"{target[e.start:e.end]!r} is not {e.text!r}")
    return problems


def flags_of(system: str, results: Iterable[DocumentResult]) -> list[Flag]:
    """Every finding of the results, with whether its entity has a first-person singular mention."""
    out: list[Flag] = []
    for r in results:
        first = {
            ent.id for ent in r.entities
            if any(m.person == "1" and m.number != "plur" for m in (*ent.source_mentions, *ent.target_mentions))
        }
        out += [Flag(system, r.doc_id, f.seg_id, f.start, f.end, f.kind, f.entity in first, f.text)
                for f in r.findings]
    return out


def _overlaps(f: Flag, e: PersonError) -> bool:
    return (f.system, f.doc_id, f.seg_id) == (e.system, e.doc_id, e.seg_id) and f.start < e.end and e.start < f.end


@dataclass
class Tally:
    caught: int = 0
    total: int = 0

    def rate(self) -> str:
        return f"{self.caught / self.total:.3f}" if self.total else "n/a"


# Groups of error rows whose recall the section reports: label -> test on a row.
RECALL_GROUPS: tuple[tuple[str, object], ...] = (
    ("English word cue, all persons", lambda e: e.word_cue),
    ("English word cue, narrator", lambda e: e.word_cue and e.who == "narrator"),
    ("English word cue, addressee", lambda e: e.word_cue and e.who == "addressee"),
    ("English word cue, third person", lambda e: e.word_cue and e.who == "third"),
    ("English word cue, clear readings only", lambda e: e.word_cue and e.certainty == "clear"),
    ("name only, all persons", lambda e: e.cue == "name"),
    ("name only, narrator", lambda e: e.cue == "name" and e.who == "narrator"),
    ("emoji only", lambda e: e.cue == "emoji"),
)


def list_recall(
    errors: Sequence[PersonError], flags: Sequence[Flag], systems: Sequence[str]
) -> dict[str, dict[str, Tally]]:
    """Recall of flagging findings on the error rows: group label -> system (and "both") -> tally."""
    flagging = [f for f in flags if f.kind in FLAGGING]
    out: dict[str, dict[str, Tally]] = {}
    for label, test in RECALL_GROUPS:
        row = {s: Tally() for s in (*systems, "both")}
        for e in errors:
            if e.kind != "error" or e.system not in systems or not test(e):  # type: ignore[operator]
                continue
            hit = any(_overlaps(f, e) for f in flagging)
            for key in (e.system, "both"):
                row[key].total += 1
                row[key].caught += hit
        out[label] = row
    return out


@dataclass(frozen=True)
class Precision:
    """First-person flagging findings on the engines: on an error row, on any row of the list, all."""

    on_error: int
    judged: int
    findings: int


def first_person_precision(errors: Sequence[PersonError], flags: Sequence[Flag]) -> Precision:
    listed = [e for e in errors if e.kind == "error"]
    mine = [f for f in flags if f.kind in FLAGGING and f.first_person]
    on_error = sum(any(_overlaps(f, e) for e in listed) for f in mine)
    judged = sum(any(_overlaps(f, e) for e in errors) for f in mine)
    return Precision(on_error, judged, len(mine))


@dataclass(frozen=True)
class AssumptionCheck:
    """The assumption rows: how many got an assumption finding, how many a flagging finding (which they should
    not: a default choice is not a contradiction)."""

    rows: int
    marked: int
    flagged: int


def assumption_check(errors: Sequence[PersonError], flags: Sequence[Flag]) -> AssumptionCheck:
    rows = [e for e in errors if e.kind == "assumption"]
    marked = sum(any(f.kind == "assumption" and _overlaps(f, e) for f in flags) for e in rows)
    flagged = sum(any(f.kind in FLAGGING and _overlaps(f, e) for f in flags) for e in rows)
    return AssumptionCheck(len(rows), marked, flagged)


@dataclass(frozen=True)
class InjectedFlip:
    """One reference document with one first-person agreement word flipped, and the evidence against it."""

    doc_id: str
    seg_id: str
    site: FlipSite
    evidence: str  # one of FLIP_EVIDENCE
    cue: str  # the English word or name, or the other target word, that the evidence rests on


def plan_flips(
    parsed: Sequence[ParsedDocument],
    tgt_rules: LanguageRules,
    src_rules: LanguageRules,
    first_names: Mapping[str, str] | None,
) -> tuple[list[InjectedFlip], int]:
    """Every flip of the documents with its evidence, and the number of sites left out because the English
    cue gives the narrator the other gender than the reference does (the reference and the English disagree,
    so a flip would not be a clean error)."""
    flips: list[InjectedFlip] = []
    conflicting = 0
    for pd in parsed:
        doc = pd.document
        sites = flip_sites(pd.target, tgt_rules, pd.source)
        if not sites:
            continue
        words = word_cues(pd.source, src_rules)
        by_word = narrator_gender(words)
        names = name_cues([p.text for p in pd.source], first_names) if by_word is None and not words else []
        by_name = narrator_gender(names)
        for site in sites:
            seg_id = doc.segments[site.seg].seg_id
            others = [s for s in sites if s != site]
            if by_word is not None:
                if by_word != site.gender:
                    conflicting += 1
                    continue
                flips.append(InjectedFlip(doc.doc_id, seg_id, site, "word",
                                          next(c.text for c in words if c.gender == by_word)))
            elif by_name is not None:
                if by_name != site.gender:
                    conflicting += 1
                    continue
                flips.append(InjectedFlip(doc.doc_id, seg_id, site, "name", names[0].text))
            elif others and all(s.gender == site.gender for s in others):
                flips.append(InjectedFlip(doc.doc_id, seg_id, site, "target", others[0].text))
            else:
                flips.append(InjectedFlip(doc.doc_id, seg_id, site, "none", ""))
    return flips, conflicting


def flipped_document(doc: Document, flip: InjectedFlip) -> Document:
    """A copy of the document with the flip applied to its segment's target."""
    segs = tuple(
        replace(s, target=apply_flip(s.target, flip.site)) if s.seg_id == flip.seg_id else s
        for s in doc.segments
    )
    return replace(doc, segments=segs)


@dataclass
class FlipTally:
    copies: int = 0
    caught: int = 0
    new_findings: int = 0
    on_flip: int = 0


def flip_scores(
    flips: Sequence[InjectedFlip],
    clean: Mapping[str, DocumentResult],
    copies: Sequence[DocumentResult],
) -> dict[str, FlipTally]:
    """Recall and precision of flagging findings on the copies, by evidence kind (`clean` maps doc_id to the
    unflipped reference's result). A copy's new findings are its flagging findings whose span and kind the
    clean result does not have."""
    out = {k: FlipTally() for k in FLIP_EVIDENCE}
    for flip, res in zip(flips, copies, strict=True):
        site = flip.site
        shift = len(site.new_text) - len(site.text)
        before = {
            (f.seg_id, f.start, f.end, f.kind) for f in clean[flip.doc_id].findings if f.kind in FLAGGING
        }
        t = out[flip.evidence]
        t.copies += 1
        hit = False
        for f in res.findings:
            if f.kind not in FLAGGING:
                continue
            start, end = f.start, f.end
            if f.seg_id == flip.seg_id and start >= site.end + shift:
                start, end = start - shift, end - shift  # the same word as in the clean text
            if (f.seg_id, start, end, f.kind) in before:
                continue
            t.new_findings += 1
            on = f.seg_id == flip.seg_id and f.start < site.start + len(site.new_text) and site.start < f.end
            t.on_flip += on
            hit = hit or on
        t.caught += hit
    return out


@dataclass
class PolicyRun:
    """Everything measured under one first-name policy."""

    policy: str
    recall: dict[str, dict[str, Tally]] = field(default_factory=dict)
    precision: Precision = Precision(0, 0, 0)
    assumptions: AssumptionCheck = AssumptionCheck(0, 0, 0)
    reference_flagged_docs: int = 0
    reference_findings: int = 0
    reference_first_person: int = 0
    flips: dict[str, FlipTally] = field(default_factory=dict)
    missed: list[PersonError] = field(default_factory=list)
    false_first_person: list[Flag] = field(default_factory=list)


@dataclass
class NarratorResult:
    data: Path
    systems: tuple[str, ...]
    errors: int
    assumptions: int
    runs: list[PolicyRun]
    conflicting_sites: int = 0
    flips_by_rule: dict[str, int] = field(default_factory=dict)
    skipped_policies: list[str] = field(default_factory=list)


def _first_names_available() -> bool:
    try:
        import gender_guesser  # noqa: F401
    except ImportError:
        return False
    return True


def run_narrator(
    data: str | Path,
    systems: Sequence[str] = SYSTEMS,
    errors: Sequence[PersonError] | None = None,
    names: str | None = None,
    align_priors: str | None = None,
) -> NarratorResult:
    """Score the engines and the reference as `gendertrace score -s en -t es` would (parse cache on), without
    and with a first-name policy (`names`: a name list path, or None for the gender-guesser package, skipped
    when it is not installed), and measure the list's recall and the injected flips. With `align_priors` (a
    file saved by `score --save-align-priors`) the alignment is frozen, so two runs compare word for word."""
    from gendertrace.declared.policy import PACKAGE_NAME_LIST, Policy, load_first_names
    from gendertrace.io.readers import read_corpus
    from gendertrace.parse.cache import default_cache_dir
    from gendertrace.rules import load_rules
    from gendertrace.scale.plan import ScoringPlan, build_scorer

    data = Path(data)
    errors = list(errors) if errors is not None else load_person_errors(errors_path())
    targets = {}
    docs_of: dict[str, list[Document]] = {}
    for system in (*systems, REFERENCE):
        docs_of[system] = read_corpus(data / f"{system}.jsonl")
        targets.update({(system, d.doc_id, s.seg_id): s.target for d in docs_of[system] for s in d.segments})
    problems = offset_problems((e for e in errors if e.system in systems), targets)
    if problems:
        raise InputError(str(errors_path()), None, f"{len(problems)} rows do not match the data: {problems[0]}")
    name_list = names or PACKAGE_NAME_LIST
    policies = [("first names off", Policy())]
    skipped = []
    if names or _first_names_available():
        policies.append(("first names on", Policy(first_names=name_list)))
    else:
        skipped.append("first names on (the gender-guesser package is not installed)")
    result = NarratorResult(data, tuple(systems), sum(e.kind == "error" for e in errors if e.system in systems),
                            sum(e.kind == "assumption" for e in errors if e.system in systems), [],
                            skipped_policies=skipped)
    tgt_rules, src_rules = load_rules("es"), load_rules("en")
    for label, policy in policies:
        frozen = {"align_mode": "frozen", "align_priors": align_priors} if align_priors else {}
        scorer = build_scorer(ScoringPlan("en", "es", cache_dir=str(default_cache_dir()), policy=policy, **frozen))
        run = PolicyRun(label)
        flags: list[Flag] = []
        for system in systems:
            flags += flags_of(system, scorer.score(docs_of[system]))
        mine = [e for e in errors if e.system in systems]
        run.recall = list_recall(mine, flags, systems)
        run.precision = first_person_precision(mine, flags)
        run.assumptions = assumption_check(mine, flags)
        flagging = [f for f in flags if f.kind in FLAGGING]
        run.missed = [e for e in mine if e.kind == "error" and e.who == "narrator"
                      and not any(_overlaps(f, e) for f in flagging)]
        run.false_first_person = [f for f in flagging if f.first_person and not any(
            _overlaps(f, e) for e in mine if e.kind == "error")]
        ref_docs = docs_of[REFERENCE]
        parsed = scorer.parse(ref_docs)
        clean = list(scorer.score_parsed_batch(parsed))
        ref_flags = [f for f in flags_of(REFERENCE, clean) if f.kind in FLAGGING]
        run.reference_flagged_docs = len({f.doc_id for f in ref_flags})
        run.reference_findings = len(ref_flags)
        run.reference_first_person = sum(f.first_person for f in ref_flags)
        lookup = load_first_names(policy.first_names) if policy.first_names else None
        flips, conflicting = plan_flips(parsed, tgt_rules, src_rules, lookup)
        result.conflicting_sites = max(result.conflicting_sites, conflicting)
        result.flips_by_rule = {}
        for f in flips:
            result.flips_by_rule[f.site.rule] = result.flips_by_rule.get(f.site.rule, 0) + 1
        by_id = {d.doc_id: d for d in ref_docs}
        copies = list(scorer.score([flipped_document(by_id[f.doc_id], f) for f in flips])) if flips else []
        run.flips = flip_scores(flips, {r.doc_id: r for r in clean}, copies)
        result.runs.append(run)
    return result


def narrator_section(data: str | Path, result: NarratorResult | None = None,
                     align_priors: str | None = None) -> list[str]:
    """The report section as Markdown lines; when `data` is not a folder, a line saying the section was
    skipped. Runs the measurement when no result is given."""
    data = Path(data)
    lines = ["## The narrator and the person addressed (real MT, English to Spanish)", ""]
    if not data.is_dir():
        return lines + [f"Skipped: no real MT folder at {data} (one SYSTEM.jsonl per engine and reference.jsonl)."]
    result = result or run_narrator(data, align_priors=align_priors)
    lines += [
        f"Data: {data.name}. The list (`corpora/judgements/en-es-person-errors.tsv`) holds {result.errors} gender "
        f"errors about persons and, apart, {result.assumptions} default choices (`assumption`), found by reading "
        f"every paragraph of {' and '.join(result.systems)}; an error is caught when a contradiction or "
        "inconsistency overlaps it. See `gendertrace.bench.narrator` for the columns and the rules.",
        "",
        "| errors | policy | " + " | ".join(result.systems) + " | both |",
        "|---|---|" + "---:|" * (len(result.systems) + 1),
    ]
    for label, _ in RECALL_GROUPS:
        for run in result.runs:
            cells = [run.recall[label][s] for s in (*result.systems, "both")]
            lines.append(f"| {label} | {run.policy} | "
                         + " | ".join(f"{t.caught}/{t.total} ({t.rate()})" for t in cells) + " |")
    lines += [
        "",
        "| policy | first-person findings on the engines | on an error | precision | on a listed word | "
        "assumption rows | marked assumption | flagged (should be 0) |",
        "|---|---:|---:|---:|---:|---:|---:|---:|",
    ]
    for run in result.runs:
        p, a = run.precision, run.assumptions
        rate = f"{p.on_error / p.findings:.3f}" if p.findings else "n/a"
        lines.append(f"| {run.policy} | {p.findings} | {p.on_error} | {rate} | {p.judged} | {a.rows} | "
                     f"{a.marked} | {a.flagged} |")
    lines += [
        "",
        "Human reference: contradiction and inconsistency findings (false alarms unless a reading shows otherwise).",
        "",
        "| policy | documents flagged | findings | about the first person |",
        "|---|---:|---:|---:|",
    ]
    for run in result.runs:
        lines.append(f"| {run.policy} | {run.reference_flagged_docs} | {run.reference_findings} | "
                     f"{run.reference_first_person} |")
    rules = ", ".join(f"{k} {v}" for k, v in sorted(result.flips_by_rule.items())) or "none"
    lines += [
        "",
        "Injected flips of first-person agreement words on the reference, one copy per site (sites by rule: "
        f"{rules}; left out because the English gives the narrator the other gender: "
        f"{result.conflicting_sites}). Evidence: *word* the English shows the narrator's gender in a word, "
        "*name* only by a name they give (first-name policy), *target* another first-person word of the "
        "reference, *none* nothing (not an error: a finding there is a false alarm).",
        "",
        "| policy | evidence | copies | caught | recall | new findings | on the flip | precision |",
        "|---|---|---:|---:|---:|---:|---:|---:|",
    ]
    for run in result.runs:
        for kind in FLIP_EVIDENCE:
            t = run.flips.get(kind, FlipTally())
            rec = f"{t.caught / t.copies:.3f}" if t.copies and kind != "none" else "n/a"
            prec = f"{t.on_flip / t.new_findings:.3f}" if t.new_findings and kind != "none" else "n/a"
            lines.append(f"| {run.policy} | {kind} | {t.copies} | {t.caught} | {rec} | {t.new_findings} | "
                         f"{t.on_flip} | {prec} |")
    if result.skipped_policies:
        lines += ["", "Not measured: " + "; ".join(result.skipped_policies) + "."]
    if result.runs and result.runs[0].missed:
        lines += ["", f"Narrator errors missed ({result.runs[0].policy}):", ""]
        lines += [f"- {e.system} {e.doc_id} [{e.seg_id}] {e.text!r} (expected {e.expected}; cue: {e.cue})"
                  for e in result.runs[0].missed]
    if result.runs and result.runs[0].false_first_person:
        lines += ["", f"First-person findings on no listed error ({result.runs[0].policy}):", ""]
        lines += [f"- {f.system} {f.doc_id} [{f.seg_id}] {f.kind} on {f.text!r}"
                  for f in result.runs[0].false_first_person]
    return lines


def main(argv: Sequence[str] | None = None) -> int:
    """Run the section alone: `python -m gendertrace.bench.narrator [DATA_DIR] [--align-priors FILE]`."""
    args = list(sys.argv[1:] if argv is None else argv)
    priors = None
    if "--align-priors" in args:
        at = args.index("--align-priors")
        priors = args[at + 1]
        del args[at:at + 2]
    data = Path(args[0]) if args else default_data_dir()
    print("\n".join(narrator_section(data, align_priors=priors)))
    return 0


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
