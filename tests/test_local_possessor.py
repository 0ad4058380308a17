"""A gendered English possessive is read in its own clause: the direct object can be its possessor.

Sentences, people and places are invented. The fact behind the rule: English "his" and "her" show the
possessor's gender, so where a clause has a subject and a direct object of different genders the form alone
tells a reader which of the two is meant ("She thanked the man for his help"), while Spanish "su" leaves the
possessor open (handbook grammar, from memory). The source resolver's choice for "su" is a guess; the English
form is not.
"""

from __future__ import annotations

import pytest

from scoring_helpers import flags, score_pairs

pytestmark = pytest.mark.slow

INTRO = ("Marta Ibargoyen llegó tarde a la reunión del consejo.",
         "Marta Ibargoyen arrived late at the council meeting.")


def test_the_object_is_the_possessor_a_reader_sees(es_en):
    # "su informe" may be hers or his; "his report" is Tobías Erralde's, and that is no error.
    result = score_pairs(es_en, [INTRO, ("Después, ella felicitó a Tobías Erralde por su informe.",
                                         "Afterwards, she congratulated Tobías Erralde on his report.")])
    assert flags(result) == []


def test_the_possessive_of_the_subject_alone_is_still_checked(es_en):
    # No second person in the clause: "his" can only be Marta Ibargoyen's, whom the source calls "ella".
    result = score_pairs(es_en, [INTRO, ("Después, ella presentó su informe.",
                                         "Afterwards, she presented his report.")])
    assert flags(result) == [("contradiction", "his", "fem")]


def test_a_name_inside_the_subject_is_no_rival(es_en):
    # "Ortuño's wife ... made his first appearance": the possessive goes with the subject, as a reader takes it.
    result = score_pairs(es_en, [("La mujer de Ortuño, Irene Ortuño, hizo su primera aparición en la campaña.",
                                  "Ortuño's wife, Irene Ortuño, made his first appearance in the campaign.")])
    assert ("contradiction", "his", "fem") in flags(result)


def test_one_slip_in_the_subjects_chain_does_not_hand_the_possessive_back(es_en):
    # The chain of "she" holds a wrong "He" (flagged itself); most of its words still say feminine, so "his"
    # remains Tobías Erralde's.
    result = score_pairs(es_en, [INTRO, ("Ella habló ayer con la prensa.", "He spoke to the press yesterday."),
                                 ("Ella respondió a todas las preguntas.", "She answered every question."),
                                 ("Después, ella felicitó a Tobías Erralde por su informe.",
                                  "Afterwards, she congratulated Tobías Erralde on his report.")])
    assert flags(result) == [("contradiction", "He", "fem")]
