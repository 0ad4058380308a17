"""Scoring at scale: streaming batches, worker processes, a dask executor, resumable runs, saved alignment.

- `plan.ScoringPlan`: the settings of a run, small enough to send to every worker.
- `work`: the unit of work, a batch of consecutive documents (what eflomal trains on), and its outcome.
- `executors`: this process, spawned worker processes, or a dask.distributed cluster; outcomes in input order.
- `run.score_stream`: read, score and write one batch after another (what `gendertrace score` runs).
- `resume`: what an interrupted results file holds, repaired.
- `priors`: alignment statistics learned and saved (eflomal priors files), and the frozen alignment model.

The parse cache these runs use is `gendertrace.parse.cache`.
"""

from gendertrace.scale.plan import ScoringPlan, build_scorer

__all__ = ["ScoringPlan", "build_scorer"]
