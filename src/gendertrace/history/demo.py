"""The demo's history step: record both engine versions of every direction and compare them."""

from __future__ import annotations

import re
from dataclasses import replace
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.history import judged
from gendertrace.history.compare import DEFAULT_SAMPLES, DEFAULT_SEED, DEFAULT_TRIALS, compare_runs
from gendertrace.history.runs import load_run
from gendertrace.history.store import HistoryStore

_RESULTS = re.compile(r"^(?P<direction>[a-z]{2,3}-[a-z]{2,3})\.(?P<version>v\d+)\.jsonl$")


def demo_engine(direction: str) -> str:
    """The engine name the demo records a direction under, e.g. demo-es-en."""
    return f"demo-{direction}"


def record_demo(results_dir: str | Path, db: str | Path, corpus: str | Path | None = None,
                seed: int = DEFAULT_SEED, samples: int = DEFAULT_SAMPLES,
                trials: int = DEFAULT_TRIALS) -> str:
    """Record RESULTS_DIR/<src>-<tgt>.<v>.jsonl as runs demo-<src>-<tgt>:<v> in DB; return the comparisons.

    DB is a store path or SQLAlchemy URL. Each direction's earliest version is compared with each later one.
    The targets (and references, if any) are read from CORPUS/<src>-<tgt>.<v>.tsv when CORPUS is given, else
    from the input named in each run's signature when that file exists. Recording again replaces the runs.
    """
    results_dir = Path(results_dir)
    found: dict[str, list[tuple[int, str, Path]]] = {}
    for path in sorted(results_dir.glob("*.jsonl")):
        m = _RESULTS.match(path.name)
        if m:
            found.setdefault(m["direction"], []).append((int(m["version"][1:]), m["version"], path))
    if not found:
        raise InputError(str(results_dir), None, "no demo results (<src>-<tgt>.<v>.jsonl) in this folder")
    sections = ["gendertrace history: each direction's engine versions compared (B against A).", ""]
    with HistoryStore(db) as store:
        for direction in sorted(found):
            versions = sorted(found[direction])
            engine = demo_engine(direction)
            for _, version, path in versions:
                run = load_run(path, _input_for(path, corpus))
                info = store.record(run, engine, version, replace=True)
                judged.save(store, info.id, judged.finding_words(path), [])
            if len(versions) < 2:
                sections += [f"{engine}: only {versions[0][1]} recorded, nothing to compare", ""]
                continue
            base = versions[0][1]
            info_a, data_a = store.load(engine, base)
            for _, version, _path in versions[1:]:
                info_b, data_b = store.load(engine, version)
                result = compare_runs(info_a, data_a, info_b, data_b, samples=samples, trials=trials,
                                      seed=seed)
                result = replace(result, diff=judged.findings_diff(judged.load(store, info_a.id)[0],
                                                                   judged.load(store, info_b.id)[0]))
                sections += [f"== {engine}: {base} -> {version} ==", result.render(), ""]
        sections.append(f"runs recorded in {store.display_url}")
    return "\n".join(sections)


def _input_for(results: Path, corpus: str | Path | None) -> Path | None:
    if corpus is not None:
        candidate = Path(corpus) / (results.name[: -len(".jsonl")] + ".tsv")
        return candidate if candidate.is_file() else None
    from gendertrace.history.runs import read_signature

    named = read_signature(results).get("input")
    return Path(str(named)) if named and Path(str(named)).is_file() else None
