"""The scale section of the benchmark: memory against corpus size, cores, the parse cache, dask.

`scale_section(data_dir)` returns Markdown lines for the benchmark report. Every measurement runs the real
command line (`python -m gendertrace.cli score ...`) in a fresh subprocess on TSV files written from the
parallel UD treebank (es -> en), in a temporary folder; the treebank's sentences are never copied into the
repository.
Figures are ratios between runs made in one sitting on one machine, so they compare like with like; the
absolute seconds depend on the machine and on whatever else it is running.

Corpora: `base` is the treebank's documents once; `x10` repeats them 10 times under new document ids
(identical texts, which the parse cache would answer from the first copy, so memory runs use no cache);
`distinct` repeats them with a copy number in front of every segment, so that no copy can be answered from
another.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

from gendertrace.bench.pud import load_pud_pair, pud_path

DIRECTION = ("es", "en")  # most measurements
REVERSE = ("en", "es")  # the second engine version is measured both ways
COPIES = 3  # copies in the distinct corpus
BATCH = 81  # documents per batch there: 645 documents make 8 batches, 4 per worker
SCORE = [sys.executable, "-m", "gendertrace.cli", "score"]
SAMPLED = ("--align-mode", "sampled")  # eflomal per batch: the rows below that learn or use priors measure it

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


def write_corpus(data_dir: Path, path: Path, copies: int = 1, distinct: bool = False,
                 direction: tuple[str, str] = DIRECTION) -> int:
    """Write the treebank's documents `copies` times as a TSV input; returns the number of documents."""
    docs = load_pud_pair(data_dir, *direction)
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


def run_score(inp: Path, out: Path, *options: str, direction: tuple[str, str] = DIRECTION) -> Measured:
    """Run `gendertrace score` on INPUT in a fresh process; its wall time and peak memory (whole tree)."""
    cmd = [sys.executable, "-c", _MEASURE, *SCORE, str(inp), "-s", direction[0], "-t", direction[1],
           "--out", str(out), "--quiet", "--no-progress", *options]
    started = time.perf_counter()
    proc = subprocess.run(cmd, capture_output=True, text=True)
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


def forget_targets(cache_dir: Path, lang: str) -> int:
    """Drop the cached parses of one language's spaCy pipeline (the targets of a new engine version)."""
    from gendertrace.parse.cache import ParseCache, known_signature

    signature = known_signature("spacy", lang)
    if signature is None:
        raise RuntimeError(f"the spaCy pipeline for {lang!r} is not installed")
    cache = ParseCache(cache_dir)
    try:
        return cache.forget(signature)
    finally:
        cache.close()


def priors_agreement(data_dir: Path, direction: tuple[str, str] = DIRECTION) -> dict[str, float]:
    """How well the sampler informed by priors aligns, against the uninformed default, on unseen documents.

    The treebank's documents are split in two halves by position. Priors are learned from the default
    alignment of the second half (as a first run would learn them); the first half is then aligned by the
    default schedule without priors and by the shortened schedule with them. Both are compared with a
    reference alignment: three samplers over the whole treebank in one batch. Agreement is the F1 of the
    symmetrised link sets; times are eflomal's wall time.
    """
    from gendertrace.link.align import PRIORS_REL_ITERATIONS, statistical_alignments
    from gendertrace.pipeline import Scorer
    from gendertrace.scale.priors import PriorCounts

    docs = load_pud_pair(data_dir, *direction)
    scorer = Scorer(*direction)
    src_parser, tgt_parser = scorer.src_parser, scorer.tgt_parser
    sources = src_parser.parse_many([p.source.text for d in docs for p in d.pairs])
    targets = tgt_parser.parse_many([p.target.text for d in docs for p in d.pairs])
    half = len(sources) // 2

    def timed(*args, **kw):
        started = time.perf_counter()
        out = statistical_alignments(*args, **kw)
        return out, time.perf_counter() - started

    reference, _ = timed(sources, targets, samplers=3)
    learned = PriorCounts()
    timed(sources[half:], targets[half:], on_links=learned.add_links)
    with tempfile.TemporaryDirectory(prefix="gendertrace-priors-") as tmp:
        priors = str(Path(tmp) / "half.priors")
        learned.write(priors)
        plain, plain_s = timed(sources[:half], targets[:half])
        informed, informed_s = timed(sources[:half], targets[:half], priors=priors)
    ref = reference[:half]
    return {"segments": half, "rel_iterations": PRIORS_REL_ITERATIONS,
            "plain": _link_f1(plain, ref), "plain_s": plain_s,
            "informed": _link_f1(informed, ref), "informed_s": informed_s}


def _link_f1(found, reference) -> float:
    common = sum(len(a & b) for a, b in zip(found, reference, strict=True))
    total = sum(len(a) for a in found) + sum(len(b) for b in reference)
    return 2 * common / total if total else 1.0


def _on_cluster(run):
    """Run `run(address)` against a fresh 2-worker LocalCluster on the loopback interface; the cluster's start
    is not part of the measurement (on a real cluster it is already running)."""
    from distributed import LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=None) as cluster:
        return run(cluster.scheduler_address)


# ----------------------------------------------------------------------------------------------------
# The section


def scale_section(data_dir: str | Path, repeats: int = 2) -> list[str]:
    """Markdown lines of the scale benchmark (heading, tables, notes); a skip note without the treebank.

    Timed runs are interleaved and repeated `repeats` times, and the fastest of each kind is kept: on a
    machine shared with other work, the minimum is the figure least disturbed by it.
    """
    data_dir = Path(data_dir)
    lines = ["## Scale: streaming, cores, parse cache, dask", ""]
    if not all(pud_path(data_dir, lang).is_file() for lang in DIRECTION):
        return lines + [f"Skipped: no es and en treebanks in {data_dir}.", ""]
    started = time.perf_counter()
    load_before = os.getloadavg()[0]
    with tempfile.TemporaryDirectory(prefix="gendertrace-scale-") as tmp:
        lines += _measure_all(data_dir, Path(tmp), repeats)
    from gendertrace.bench.speed import speed_section

    # The real MT dev set sits beside the treebank folder (../shared).
    lines += speed_section(data_dir, data_dir.parent / "wmt24-en-es-dev")
    lines += [
        f"Command: `make bench` (this section alone: `python -m gendertrace.bench.scale ../shared/ud-pud`). "
        f"Whole section: {time.perf_counter() - started:.0f} s on {os.cpu_count()} cores; load average "
        f"{load_before:.1f} before and {os.getloadavg()[0]:.1f} after (above 0 means other work shared the "
        f"cores).",
        "",
    ]
    return lines


def _verdict(ok: bool) -> str:
    return "met" if ok else "not met"


def _pair_row(what: str, first: Measured, second: Measured) -> str:
    ratio = second.seconds / first.seconds
    return (f"| {what} | {first.seconds:.1f} | {second.seconds:.1f} | {ratio:.2f} | <= 0.65 | "
            f"{_verdict(ratio <= 0.65)} |")


def _runs(times: dict[str, list[float]]) -> str:
    return "; ".join(f"{k} " + "/".join(f"{t:.1f}" for t in v) for k, v in times.items() if v)


def _measure_all(data_dir: Path, tmp: Path, repeats: int) -> list[str]:
    base, x10 = tmp / "base.tsv", tmp / "x10.tsv"
    distinct, reverse = tmp / "distinct.tsv", tmp / "reverse.tsv"
    n_base = write_corpus(data_dir, base)
    n_x10 = write_corpus(data_dir, x10, copies=10)
    n_distinct = write_corpus(data_dir, distinct, copies=COPIES, distinct=True)
    write_corpus(data_dir, reverse, copies=COPIES, distinct=True, direction=REVERSE)
    reverse_base = tmp / "reverse-base.tsv"
    write_corpus(data_dir, reverse_base, direction=REVERSE)
    priors, reverse_priors = tmp / "es-en.priors", tmp / "en-es.priors"
    batch = ("--batch-docs", str(BATCH))

    # Alignment statistics from the whole treebank in one batch, for the frozen models used below.
    learn = run_score(base, tmp / "learn.jsonl", *SAMPLED, "--jobs", "1", "--no-cache", "--batch-docs", str(n_base),
                      "--save-align-priors", str(priors))
    run_score(reverse_base, tmp / "learn-rev.jsonl", *SAMPLED, "--jobs", "1", "--no-cache", "--batch-docs", str(n_base),
              "--save-align-priors", str(reverse_priors), direction=REVERSE)
    frozen = ("--align-mode", "frozen", "--align-priors", str(priors))
    frozen_rev = ("--align-mode", "frozen", "--align-priors", str(reverse_priors))

    # Memory: the same settings on 1x and 10x the documents, one process, nothing cached.
    mem_options = ("--jobs", "1", "--no-cache", "--batch-docs", "50", *frozen)
    mem_1 = run_score(base, tmp / "m1.jsonl", *mem_options)
    mem_10 = run_score(x10, tmp / "m10.jsonl", *mem_options)

    def first_and_second(options: tuple[str, ...], name: str) -> tuple[Measured, Measured]:
        """A first engine version (cold cache), then the second (sources cached), in the reverse direction;
        with sampled alignment the first run saves its alignment statistics and the second uses them."""
        cache = str(tmp / f"cache-{name}")
        learned = tmp / f"{name}.priors"
        save, use = ((), ()) if options else ((*SAMPLED, "--save-align-priors", str(learned)),
                                              (*SAMPLED, "--align-priors", str(learned)))
        first = run_score(reverse, tmp / f"{name}1.jsonl", "--jobs", "2", "--cache", cache, *batch, *options, *save,
                          direction=REVERSE)
        forget_targets(Path(cache), REVERSE[1])
        return first, run_score(reverse, tmp / f"{name}2.jsonl", "--jobs", "2", "--cache", cache, *batch,
                                *options, *use, direction=REVERSE)

    # Sampled alignment (opt-in), each first run with a cold cache of its own: jobs 1, jobs 2, then the
    # second engine version after jobs 2 (the sources' parses stay, the targets' are dropped; the alignment
    # statistics the first run saved are its priors); the same in the other direction, where the cached side
    # (English) is the costlier one to parse. Interleaved and repeated; the fastest of each kind is kept.
    # Every first run saves its alignment statistics, so that jobs 1 and jobs 2 do the same work.
    times: dict[str, list[float]] = {k: [] for k in ("jobs1", "jobs2", "second", "first_rev", "second_rev")}
    for r in range(repeats):
        times["jobs1"].append(run_score(distinct, tmp / "j1.jsonl", *SAMPLED, "--jobs", "1", "--cache",
                                        str(tmp / f"c1-{r}"), *batch, "--save-align-priors",
                                        str(tmp / f"j1-{r}.priors")).seconds)
        times["jobs2"].append(run_score(distinct, tmp / "j2.jsonl", *SAMPLED, "--jobs", "2", "--cache",
                                        str(tmp / f"c2-{r}"), *batch, "--save-align-priors",
                                        str(tmp / f"j2-{r}.priors")).seconds)
        forget_targets(tmp / f"c2-{r}", DIRECTION[1])
        times["second"].append(run_score(distinct, tmp / "v2.jsonl", *SAMPLED, "--jobs", "2", "--cache",
                                         str(tmp / f"c2-{r}"), *batch, "--align-priors",
                                         str(tmp / f"j2-{r}.priors")).seconds)
        first_rev, second_rev = first_and_second((), f"r{r}")
        times["first_rev"].append(first_rev.seconds)
        times["second_rev"].append(second_rev.seconds)

    # dask on a fresh 2-worker LocalCluster, with the settings and a cold cache like jobs 2 (one run: it is
    # far from its target either way).
    dask_missing = False
    try:
        times["dask"] = [_on_cluster(lambda address: run_score(
            distinct, tmp / "d.jsonl", *SAMPLED, "--executor", "dask", "--scheduler", address, "--cache",
            str(tmp / "cd"), *batch)).seconds]
    except ImportError:
        dask_missing = True

    frozen_rev_runs = first_and_second(frozen_rev, "f")

    # The frozen model on dask against the same settings locally: the results must be identical.
    same_frozen = None
    if not dask_missing:
        _on_cluster(lambda address: run_score(reverse, tmp / "fd.jsonl", "--executor", "dask", "--scheduler",
                                              address, "--no-cache", *batch, *frozen_rev, direction=REVERSE))
        same_frozen = sorted_lines(tmp / "f1.jsonl") == sorted_lines(tmp / "fd.jsonl")

    agreement = priors_agreement(data_dir)
    best = {k: min(v) for k, v in times.items() if v}
    mem_ratio = mem_10.peak_kib / mem_1.peak_kib
    speedup = best["jobs1"] / best["jobs2"]
    second = best["second"] / best["jobs2"]
    d, rd = f"{DIRECTION[0]}-{DIRECTION[1]}", f"{REVERSE[0]}-{REVERSE[1]}"
    lines = [
        f"Corpora from the treebank: base = its {n_base} {d} documents; 10x = {n_x10} documents (copies "
        f"under new ids); distinct = {n_distinct} documents ({COPIES} copies, each segment prefixed with "
        f"its copy number so that the cache cannot serve one copy from another), and the same for {rd}; "
        f"batches of {BATCH} documents. "
        f"Every figure is a run of `gendertrace score` in a fresh process; peak memory is the maximum "
        f"resident set of the process tree (`getrusage`); times are the fastest of {repeats} interleaved "
        f"runs. The second engine version is simulated exactly: after the first run, the cached parses of "
        f"the target language are dropped, so the sources come from the cache and every target is parsed.",
        "",
        "| measurement | first | second | ratio | target | |",
        "|---|---:|---:|---:|---|---|",
        f"| peak memory (MiB), 1x vs 10x documents, {d} (jobs 1, batches of 50, no cache, frozen "
        f"alignment) | "
        f"{mem_1.peak_kib / 1024:.0f} | {mem_10.peak_kib / 1024:.0f} | {mem_ratio:.2f} | <= 1.20 | "
        f"{_verdict(mem_ratio <= 1.2)} |",
        f"| time (s), jobs 1 vs jobs 2, {d} (sampled alignment, cold cache) | {best['jobs1']:.1f} | "
        f"{best['jobs2']:.1f} | {speedup:.2f}x faster | >= 1.6x | {_verdict(speedup >= 1.6)} |",
        f"| time (s), first vs second engine version, {d} (sampled, jobs 2, sources cached, the first run's "
        f"alignment statistics as priors) | "
        f"{best['jobs2']:.1f} | {best['second']:.1f} | {second:.2f} | <= 0.65 | {_verdict(second <= 0.65)} |",
        f"| time (s), first vs second engine version, {rd} (the same) | "
        f"{best['first_rev']:.1f} | {best['second_rev']:.1f} | {best['second_rev'] / best['first_rev']:.2f} | "
        f"<= 0.65 | {_verdict(best['second_rev'] / best['first_rev'] <= 0.65)} |",
        _pair_row(f"time (s), first vs second engine version, {rd} (frozen alignment, jobs 2, sources "
                  f"cached, one run)", *frozen_rev_runs),
    ]
    if "dask" in best:
        ratio = best["dask"] / best["jobs2"]
        lines.append(f"| time (s), jobs 2 vs dask LocalCluster of 2 worker processes, {d} (sampled, cold "
                     f"cache, one dask run) | {best['jobs2']:.1f} | {best['dask']:.1f} | {ratio:.2f} | <= 1.30 | "
                     f"{_verdict(ratio <= 1.3)} |")
    else:
        lines.append("| dask executor | | | | <= 1.30 | not measured: dask.distributed is not installed |")
    lines += [
        "",
        f"All runs (s): {_runs(times)}. Priors learned from the base corpus in one batch in "
        f"{learn.seconds:.1f} s; memory runs {mem_1.seconds:.0f} s (1x) and {mem_10.seconds:.0f} s (10x).",
        "",
        f"Alignment with priors, {d}: the sampler runs {agreement['rel_iterations']} of eflomal's iteration "
        f"schedule when it has priors. On the first {agreement['segments']} segment pairs of the treebank, with "
        f"priors learned from the other half, its links agree with a reference alignment (three samplers, the "
        f"whole treebank in one batch) at F1 {agreement['informed']:.3f} in {agreement['informed_s']:.1f} s, "
        f"against {agreement['plain']:.3f} in {agreement['plain_s']:.1f} s for the full schedule without priors. "
        f"The simulated second version has the first version's targets, so its results should equal the "
        f"first run's: {differing_documents(tmp / 'j2.jsonl', tmp / 'v2.jsonl')} of {n_distinct} documents "
        f"differ ({rd}: {differing_documents(tmp / 'r01.jsonl', tmp / 'r02.jsonl')}).",
        "",
        f"Identical results: jobs 1 against jobs 2 (sampled) "
        f"{differing_documents(tmp / 'j1.jsonl', tmp / 'j2.jsonl')} of {n_distinct} documents differ"
        + (f", jobs 2 against dask (sampled) {differing_documents(tmp / 'j2.jsonl', tmp / 'd.jsonl')} differ"
           if "dask" in best else "")
        + ": sampled alignment draws from eflomal's own random seed, so two runs with the same settings "
        f"differ as much. With the frozen model ({rd}), local jobs 2 against dask: "
        + ("not measured" if same_frozen is None else "byte-identical after sorting" if same_frozen
           else "DIFFERENT")
        + ".",
        "",
    ]
    return lines


def main() -> None:  # pragma: no cover - for running the section alone
    data = Path(sys.argv[1]) if len(sys.argv) > 1 else Path("../shared/ud-pud")
    print("\n".join(scale_section(data)))


if __name__ == "__main__":  # pragma: no cover
    main()
