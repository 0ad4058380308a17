"""One benchmark direction end to end on an invented treebank: the copies, the counts and the even splits.

The sentences and their gold rows are invented; the features follow the UD guidelines for pronouns
(PronType=Prs, Gender, Person, Case) and nouns (Gender, Number), universaldependencies.org/u/feat/.
"""

from __future__ import annotations

import pytest
from treebank_helpers import Sent

from gendertrace.bench.run import run_direction

SHE = "Case=Nom|Gender=Fem|Number=Sing|Person=3|PronType=Prs"
ELLA = "Gender=Fem|Number=Sing|Person=3|PronType=Prs"
V3 = "Mood=Ind|Number=Sing|Person=3|VerbForm=Fin"


@pytest.fixture
def folder(treebanks):
    english = [
        Sent("s1", "She signed the lease.",
             f"1 She PRON {SHE} 2 nsubj\n2 signed VERB _ 0 root\n3 the DET Definite=Def|PronType=Art 4 det\n"
             "4 lease NOUN Number=Sing 2 obj\n5 . PUNCT _ 2 punct", "d-split"),
        Sent("s2", "She paid the deposit.",
             f"1 She PRON {SHE} 2 nsubj\n2 paid VERB _ 0 root\n3 the DET Definite=Def|PronType=Art 4 det\n"
             "4 deposit NOUN Number=Sing 2 obj\n5 . PUNCT _ 2 punct"),
        Sent("t1", "The architect arrived.",
             "1 The DET Definite=Def|PronType=Art 2 det\n2 architect NOUN Number=Sing 3 nsubj\n"
             "3 arrived VERB _ 0 root\n4 . PUNCT _ 3 punct", "d-noun"),
        Sent("t2", "She spoke.", f"1 She PRON {SHE} 2 nsubj\n2 spoke VERB _ 0 root\n3 . PUNCT _ 2 punct"),
    ]
    spanish = [
        Sent("s1", "Firmó el contrato.",
             f"1 Firmó VERB {V3} 0 root\n2 el DET Definite=Def|Gender=Masc|Number=Sing|PronType=Art 3 det\n"
             "3 contrato NOUN Gender=Masc|Number=Sing 1 obj\n4 . PUNCT _ 1 punct", "d-split"),
        Sent("s2", "Pagó la fianza.",
             f"1 Pagó VERB {V3} 0 root\n2 la DET Definite=Def|Gender=Fem|Number=Sing|PronType=Art 3 det\n"
             "3 fianza NOUN Gender=Fem|Number=Sing 1 obj\n4 . PUNCT _ 1 punct"),
        Sent("t1", "La arquitecta llegó.",
             "1 La DET Definite=Def|Gender=Fem|Number=Sing|PronType=Art 2 det\n"
             f"2 arquitecta NOUN Gender=Fem|Number=Sing 3 nsubj\n3 llegó VERB {V3} 0 root\n4 . PUNCT _ 3 punct",
             "d-noun"),
        Sent("t2", "Ella habló.", f"1 Ella PRON {ELLA} 2 nsubj\n2 habló VERB {V3} 0 root\n3 . PUNCT _ 2 punct"),
    ]
    return treebanks(en=english, es=spanish)


def test_a_direction_counts_copies_evidence_and_even_splits(folder):
    res = run_direction(folder, "es-en", seed=13)
    assert (res.documents, res.injected, res.evidenced) == (2, 3, 3)
    # d-split: each "She" is the other's only evidence and the source is pro-drop; d-noun: "arquitecta" and
    # "Ella" speak in the source.
    assert res.split == 2
    assert res.clean_flagged == 0
    assert res.split_on_error <= res.split_findings <= res.findings
    assert res.findings_on_error >= res.split_on_error
    # The source noun and pronoun settle the third copy: "He spoke" against "La arquitecta", "Ella".
    assert res.caught_evidenced - res.caught_split == 1
    # An even split is caught by flagging both of its words, one of them falsely.
    assert (res.caught_split, res.split_on_error, res.split_findings) == (2, 2, 4)
