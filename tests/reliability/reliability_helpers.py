"""A tiny invented corpus given as CoNLL-U on both sides, so that every command runs in a fraction of a second
without loading a tagger; and a runner of the command line that returns exit code and output.

The target "Él estaba cansado." misgenders the source's "She" (a contradiction), so runs have checked
references; "Nerea Ubillos smiled." alone has none.
"""

from __future__ import annotations

import shutil
from pathlib import Path

from click.testing import CliRunner

from gendertrace.cli import main

HERE = Path(__file__).parent
SRC_CONLLU = """\
# sent_id = s1
# text = Nerea Ubillos smiled.
1	Nerea	Nerea	PROPN	_	_	3	nsubj	_	NE=PER
2	Ubillos	Ubillos	PROPN	_	_	1	flat	_	NE=PER
3	smiled	smile	VERB	_	Tense=Past	0	root	_	SpaceAfter=No
4	.	.	PUNCT	_	_	3	punct	_	_

# sent_id = s2
# text = She was tired.
1	She	she	PRON	_	Gender=Fem|Number=Sing|Person=3	3	nsubj	_	_
2	was	be	AUX	_	_	3	cop	_	_
3	tired	tired	ADJ	_	_	0	root	_	SpaceAfter=No
4	.	.	PUNCT	_	_	3	punct	_	_

"""
TGT_CONLLU = """\
# sent_id = t1
# text = Nerea Ubillos sonrió.
1	Nerea	Nerea	PROPN	_	_	3	nsubj	_	NE=PER
2	Ubillos	Ubillos	PROPN	_	_	1	flat	_	NE=PER
3	sonrió	sonreír	VERB	_	Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin	0	root	_	SpaceAfter=No
4	.	.	PUNCT	_	_	3	punct	_	_

# sent_id = t2
# text = Él estaba cansado.
1	Él	él	PRON	_	Gender=Masc|Number=Sing|Person=3|PronType=Prs	3	nsubj	_	_
2	estaba	estar	AUX	_	Mood=Ind|Number=Sing|Person=3|Tense=Imp|VerbForm=Fin	3	cop	_	_
3	cansado	cansado	ADJ	_	Gender=Masc|Number=Sing	0	root	_	SpaceAfter=No
4	.	.	PUNCT	_	_	3	punct	_	_

"""
ROWS = [("d1", "1", "Nerea Ubillos smiled.", "Nerea Ubillos sonrió."),
        ("d1", "2", "She was tired.", "Él estaba cansado."),
        ("d2", "1", "Nerea Ubillos smiled.", "Nerea Ubillos sonrió."),
        ("d3", "1", "She was tired.", "Él estaba cansado.")]


def tsv(path: Path, rows=ROWS) -> Path:
    lines = ["doc_id\tseg_id\tsource\ttarget", *("\t".join(r) for r in rows)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


class Workspace:
    """A folder holding the corpus, in which commands run (relative paths as a user types them)."""

    def __init__(self, root: Path) -> None:
        self.root = root
        tsv(root / "in.tsv")
        (root / "src.conllu").write_text(SRC_CONLLU, encoding="utf-8")
        (root / "tgt.conllu").write_text(TGT_CONLLU, encoding="utf-8")

    def run(self, *args: str, code: int | None = None):
        result = CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)
        if code is not None:
            assert result.exit_code == code, result.output
        return result

    def score(self, inp: str = "in.tsv", *extra: str, code: int | None = None, conllu: str = "src.conllu"):
        return self.run("score", inp, "-s", "en", "-t", "es", "--src-conllu", conllu, "--tgt-conllu",
                        "tgt.conllu", "--no-cache", "--no-progress", "-q", *extra, code=code)

    def snapshot(self) -> dict[str, bytes]:
        """Every file of the folder with its bytes (symbolic links as their target's name)."""
        return {str(p.relative_to(self.root)): (p.readlink().as_posix().encode() if p.is_symlink()
                                                 else p.read_bytes())
                for p in sorted(self.root.rglob("*")) if p.is_file() or p.is_symlink()}

    def copy(self, name: str, to: str) -> Path:
        return Path(shutil.copy(self.root / name, self.root / to))
