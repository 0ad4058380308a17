"""The scale section of the benchmark: memory against corpus size, cores, the parse cache, dask.

`scale_section(data_dir)` returns Markdown lines for the benchmark report. Every measurement runs the real
command line (`python -m gendertrace.cli score ...`) in a fresh subprocess on TSV files written from the
parallel UD treebank (es -> en), in a temporary folder; the treebank's sentences are never copied into the
repository.
Figures are ratios between runs made in one sitting on one machine, so they compare like with like; the
absolute seconds depend on the machine and on whatever else it is running.

Corpora: `base` is the treebank's documents once; `xN` repeats them N times under new document ids (identical
texts, which the parse cache would answer from the first copy, so memory runs use no cache); `distinct-xN`
repeats them with a copy number in front of every segment, so that no copy can be answered from another.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
import time
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from gendertrace.bench.pud import load_pud_pair, pud_path

DIRECTION = ("es", "en")
SCORE = [sys.executable, "-m", "gendertrace.cli", "score"]

# Runs a command and prints its exit status and the peak resident memory of its process tree (in KiB).
_MEASURE = (
    "import resource, subprocess, sys\n"
    "status = subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)\n"
    "sys.stderr.write(status.stderr.decode('utf-8', 'replace')[-2000:])\n"
    "print(status.returncode, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)\n"
)


@dataclass(frozen=True)
class Measured:
    seconds: float
    peak_kib: int


# ----------------------------------------------------------------------------------------------------
# Corpora


def write_corpus(data_dir: Path, path: Path, copies: int = 1, distinct: bool = False) -> int:
    """Write the treebank's documents `copies` times as a TSV input; returns the number of documents."""
    docs = load_pud_pair(data_dir, *DIRECTION)
    n = 0
    with open(path, "w", encoding="utf-8") as f:
        f.write("doc_id\tseg_id\tsource\ttarget\n")
        for k in range(copies):
            mark = f"({k + 1}) " if distinct else ""
            for d in docs:
                doc_id = d.doc_id if copies == 1 else f"c{k + 1}-{d.doc_id}"
                for p in d.pairs:
                    f.write(f"{doc_id}\t{p.sent_id}\t{mark}{_cell(p.source.text)}\t{mark}{_cell(p.target.text)}\n")
                n += 1
    return n


def _cell(text: str) -> str:
    return text.replace("\t", " ").replace("\n", " ")


# ----------------------------------------------------------------------------------------------------
# Running


def run_score(inp: Path, out: Path, *options: str, env: dict | None = None) -> Measured:
    """Run `gendertrace score` on INPUT in a fresh process; its wall time and peak memory (whole tree)."""
    cmd = [sys.executable, "-c", _MEASURE, *SCORE, str(inp), "-s", DIRECTION[0], "-t", DIRECTION[1],
           "--out", str(out), "--quiet", "--no-progress", *options]
    started = time.perf_counter()
    proc = subprocess.run(cmd, capture_output=True, text=True, env=env)
    seconds = time.perf_counter() - started
    try:
        status, peak = (int(x) for x in proc.stdout.split())
    except ValueError:
        status, peak = 1, 0
    if proc.returncode != 0 or status != 0:
        raise RuntimeError(f"score failed ({status}): {proc.stderr.strip()[-600:]}")
    return Measured(seconds, peak)


def sorted_lines(path: Path) -> list[str]:
    return sorted(path.read_text(encoding="utf-8").splitlines())


def differing_documents(a: Path, b: Path) -> int:
    """Documents whose result lines differ between two results files (matched by doc_id)."""
    def by_id(p: Path) -> dict[str, str]:
        return {json.loads(line)["doc_id"]: line for line in p.read_text(encoding="utf-8").splitlines()}

    x, y = by_id(a), by_id(b)
    return sum(x.get(k) != y.get(k) for k in x.keys() | y.keys())


def forget_side(cache_dir: Path, signature: str) -> int:
    from gendertrace.parse.cache import ParseCache

    cache = ParseCache(cache_dir)
    try:
        return cache.forget(signature)
    finally:
        cache.close()


# ----------------------------------------------------------------------------------------------------
# The section


def scale_section(data_dir: str | Path) -> list[str]:
    """Markdown lines of the scale benchmark (heading, tables, notes); a skip note without the treebank."""
    data_dir = Path(data_dir)
    lines = ["## Scale: streaming, cores, parse cache, dask", ""]
    if not all(pud_path(data_dir, lang).is_file() for lang in DIRECTION):
        return lines + [f"Skipped: no es and en treebanks in {data_dir}.", ""]
    started = time.perf_counter()
    with tempfile.TemporaryDirectory(prefix="gendertrace-scale-") as tmp:
        lines += _measure_all(data_dir, Path(tmp))
    lines += [f"Whole section: {time.perf_counter() - started:.0f} s on {os.cpu_count()} cores.", ""]
    return lines


def _measure_all(data_dir: Path, tmp: Path) -> list[str]:
    base, x10, distinct = tmp / "base.tsv", tmp / "x10.tsv", tmp / "distinct.tsv"
    n_base = write_corpus(data_dir, base)
    n_x10 = write_corpus(data_dir, x10, copies=10)
    n_distinct = write_corpus(data_dir, distinct, copies=3, distinct=True)
    priors = tmp / "es-en.priors"

    # Alignment statistics from the whole treebank in one batch, for the frozen model used below.
    learn = run_score(base, tmp / "learn.jsonl", "--jobs", "1", "--no-cache", "--batch-docs", str(n_base),
                      "--save-align-priors", str(priors))

    # Memory: the same settings on 1x and 10x the documents, one process, nothing cached.
    mem_options = ("--jobs", "1", "--no-cache", "--batch-docs", "50", "--align-mode", "frozen",
                   "--align-priors", str(priors))
    mem_1 = run_score(base, tmp / "m1.jsonl", *mem_options)
    mem_10 = run_score(x10, tmp / "m10.jsonl", *mem_options)

    # Cores and cache, sampled alignment (the default): jobs 1 and jobs 2 each with a cold cache of its own;
    # then the second engine version: the sources' parses stay, the targets' are dropped.
    batch = ("--batch-docs", "80")
    cache_1, cache_2, cache_d = tmp / "cache1", tmp / "cache2", tmp / "cached"
    jobs_1 = run_score(distinct, tmp / "j1.jsonl", "--jobs", "1", "--cache", str(cache_1), *batch)
    jobs_2 = run_score(distinct, tmp / "j2.jsonl", "--jobs", "2", "--cache", str(cache_2), *batch)
    target_signature = _target_signature()
    forget_side(cache_2, target_signature)
    second = run_score(distinct, tmp / "v2.jsonl", "--jobs", "2", "--cache", str(cache_2), *batch)

    # The same with the frozen alignment model.
    frozen = ("--align-mode", "frozen", "--align-priors", str(priors), *batch)
    cache_f = tmp / "cachef"
    frozen_1 = run_score(distinct, tmp / "f1.jsonl", "--jobs", "2", "--cache", str(cache_f), *frozen)
    forget_side(cache_f, target_signature)
    frozen_2 = run_score(distinct, tmp / "f2.jsonl", "--jobs", "2", "--cache", str(cache_f), *frozen)

    # dask: a 2-worker LocalCluster on the loopback interface, started before the clock.
    dask_lines: list[str]
    try:
        dask_lines = _dask_runs(tmp, distinct, cache_d, batch, frozen, jobs_2)
    except ImportError:
        dask_lines = ["dask.distributed is not installed (`pip install 'gendertrace[dask]'`): not measured.",
                      ""]

    def row(what: str, a: float, b: float, target: str, ok: bool) -> str:
        return f"| {what} | {a:.1f} | {b:.1f} | {b / a:.2f} | {target} | {'met' if ok else 'not met'} |"

    mem_ratio = mem_10.peak_kib / mem_1.peak_kib
    speedup = jobs_1.seconds / jobs_2.seconds
    lines = [
        f"Direction {DIRECTION[0]}-{DIRECTION[1]}. Corpora: base = the treebank's {n_base} documents; "
        f"10x = {n_x10} documents (copies under new ids); distinct = {n_distinct} documents (3 copies, each "
        f"segment prefixed with its copy number so that the cache cannot serve one copy from another). "
        f"Every figure is one run of `gendertrace score` in a fresh process; peak memory is the maximum "
        f"resident set of the process tree (`getrusage`).",
        "",
        "| measurement | first (s or MiB) | second | ratio | target | |",
        "|---|---:|---:|---:|---|---|",
        f"| peak memory, 1x vs 10x documents (jobs 1, batches of 50, no cache, frozen alignment) | "
        f"{mem_1.peak_kib / 1024:.0f} | {mem_10.peak_kib / 1024:.0f} | {mem_ratio:.2f} | <= 1.20 | "
        f"{'met' if mem_ratio <= 1.2 else 'not met'} |",
        f"| time, jobs 1 vs jobs 2 (sampled alignment, cold cache) | {jobs_1.seconds:.1f} | "
        f"{jobs_2.seconds:.1f} | {speedup:.2f}x faster | >= 1.6x | "
        f"{'met' if speedup >= 1.6 else 'not met'} |",
        row("time, first vs second engine version (sampled, jobs 2, sources cached)", jobs_2.seconds,
            second.seconds, "<= 0.65", second.seconds / jobs_2.seconds <= 0.65),
        row("time, first vs second engine version (frozen, jobs 2, sources cached)", frozen_1.seconds,
            frozen_2.seconds, "<= 0.65", frozen_2.seconds / frozen_1.seconds <= 0.65),
        "",
        f"Priors learned from the base corpus in one batch in {learn.seconds:.1f} s. Memory for 10x in "
        f"{mem_10.seconds:.0f} s, 1x in {mem_1.seconds:.0f} s.",
        "",
    ]
    same_jobs = sorted_lines(tmp / "j1.jsonl") == sorted_lines(tmp / "j2.jsonl")
    lines += [
        f"jobs 1 and jobs 2 results identical: {'yes' if same_jobs else 'no'} "
        f"({differing_documents(tmp / 'j1.jsonl', tmp / 'j2.jsonl')} of {n_distinct} documents differ; "
        f"sampled alignment draws from eflomal's own random seed, so two runs with the same settings differ "
        f"as much).",
        "",
    ]
    return lines + dask_lines


def _target_signature() -> str:
    from gendertrace.parse.cache import known_signature

    signature = known_signature("spacy", DIRECTION[1])
    if signature is None:
        raise RuntimeError(f"the spaCy pipeline for {DIRECTION[1]!r} is not installed")
    return signature


def _dask_runs(tmp: Path, distinct: Path, cache_dir: Path, batch: Sequence[str], frozen: Sequence[str],
               jobs_2: Measured) -> list[str]:
    from distributed import LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=None) as cluster:
        address = cluster.scheduler_address
        on_dask = run_score(distinct, tmp / "d.jsonl", "--executor", "dask", "--scheduler", address,
                            "--cache", str(cache_dir), *batch)
    # The frozen comparison on fresh workers and caches, so nothing is shared with the runs above.
    frozen_local = run_score(distinct, tmp / "fl.jsonl", "--jobs", "2", "--no-cache", *frozen)
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=None) as cluster:
        frozen_dask = run_score(distinct, tmp / "fd.jsonl", "--executor", "dask", "--scheduler",
                                cluster.scheduler_address, "--no-cache", *frozen)
    ratio = on_dask.seconds / jobs_2.seconds
    same_frozen = sorted_lines(tmp / "fl.jsonl") == sorted_lines(tmp / "fd.jsonl")
    differ = differing_documents(tmp / "j2.jsonl", tmp / "d.jsonl")
    return [
        "| executor | seconds | ratio to jobs 2 | target | |",
        "|---|---:|---:|---|---|",
        f"| local, jobs 2 (sampled, cold cache) | {jobs_2.seconds:.1f} | 1.00 | | |",
        f"| dask LocalCluster, 2 worker processes (sampled, cold cache) | {on_dask.seconds:.1f} | "
        f"{ratio:.2f} | <= 1.30 | {'met' if ratio <= 1.3 else 'not met'} |",
        f"| local, jobs 2 (frozen, no cache) | {frozen_local.seconds:.1f} | | | |",
        f"| dask LocalCluster (frozen, no cache) | {frozen_dask.seconds:.1f} | "
        f"{frozen_dask.seconds / frozen_local.seconds:.2f} (to frozen local) | | |",
        "",
        f"Results, local jobs 2 against dask, sorted lines: sampled alignment {differ} documents differ "
        f"(eflomal's randomness); frozen alignment {'byte-identical' if same_frozen else 'DIFFERENT'}.",
        "",
    ]


def main() -> None:  # pragma: no cover - for running the section alone
    data = Path(sys.argv[1]) if len(sys.argv) > 1 else Path("../shared/ud-pud")
    print("\n".join(scale_section(data)))


if __name__ == "__main__":  # pragma: no cover
    main()
