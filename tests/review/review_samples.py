"""Invented translation files and results for the review tests. People, places and sentences are made up."""

from __future__ import annotations

import json
from pathlib import Path

# XLIFF 1.2 (XLIFF 1.2 specification: <file original>, <trans-unit>, inline <g>, <x>, <bpt>, <ept>, <ph>,
# <mrk>).
# The second <file> is laid out on one line on purpose; the first has a header note, a group, an alt-trans, a
# note of its own and a unit without a target.
XLIFF12 = """<?xml version="1.0" encoding="UTF-8"?>
<!-- exported for review -->
<xliff version="1.2" xmlns="urn:oasis:names:tc:xliff:document:1.2">
  <file original="harbour-note" source-language="es" target-language="en" datatype="plaintext">
    <header>
      <note>Client style guide: neutral wording where the source is silent.</note>
    </header>
    <body>
      <group id="g1">
        <trans-unit id="t1" resname="title">
          <source>La capitana <g id="1">Ilune Garaikoa</g> llegó a Berrenda.</source>
          <target state="translated">Captain <g id="1">Ilune Garaikoa</g> arrived in Berrenda.</target>
          <alt-trans><target>Captain Garaikoa arrived.</target></alt-trans>
        </trans-unit>
      </group>
      <trans-unit id="t2">
        <source>Estaba <bpt id="2">&lt;b&gt;</bpt>agotada<ept id="2">&lt;/b&gt;</ept>, pero contenta.<x id="3"/></source>
        <target><ph id="4">{0}</ph>He was <bpt id="2">&lt;b&gt;</bpt>exhausted<ept id="2">&lt;/b&gt;</ept> &amp; happy.<x id="3"/></target>
        <note from="reviewer">Check the pronoun.</note>
      </trans-unit>
      <trans-unit id="t3">
        <source>Sin traducir todavía.</source>
      </trans-unit>
    </body>
  </file>
  <file original="ward-note" source-language="es" target-language="en" datatype="plaintext"><body><trans-unit id="t1"><source>El <mrk mtype="term">enfermero</mrk> sonrió.</source><target>The <mrk mtype="term">nurse</mrk> smiled; she waved.</target></trans-unit></body></file>
</xliff>
"""  # noqa: E501

# XLIFF 2.0 (XLIFF 2.0 specification: <unit>, <segment>, <ignorable>, <notes>, inline <pc>, <ph>, <sc>, <ec>,
# <mrk>, <cp>). u1 has notes and two segments; u2 has no notes; u3 has no target.
XLIFF20 = """<?xml version="1.0" encoding="UTF-8"?>
<xliff xmlns="urn:oasis:names:tc:xliff:document:2.0" version="2.0" srcLang="es" trgLang="en">
  <file id="f1" original="clinic-memo">
    <unit id="u1">
      <notes>
        <note category="client">Keep titles as they are.</note>
      </notes>
      <originalData>
        <data id="d1">&lt;i&gt;</data>
        <data id="d2">&lt;/i&gt;</data>
      </originalData>
      <segment id="s1" state="translated">
        <source>La doctora <pc id="1" dataRefStart="d1" dataRefEnd="d2">Maren Oskoz</pc> atendió.</source>
        <target>Doctor <pc id="1" dataRefStart="d1" dataRefEnd="d2">Maren Oskoz</pc> attended.</target>
      </segment>
      <ignorable>
        <source> </source>
      </ignorable>
      <segment id="s2">
        <source>Después <ph id="2"/>se fue cansada.</source>
        <target>Then <ph id="2"/>he left<cp hex="00A0"/>tired.</target>
      </segment>
    </unit>
    <unit id="u2">
      <segment>
        <source>Nadie la esperaba<sc id="3"/> en casa<ec startRef="3"/>.</source>
        <target>Nobody expected <mrk id="m1" translate="no">him</mrk><sc id="3"/> at home<ec startRef="3"/>.</target>
      </segment>
    </unit>
    <unit id="u3">
      <segment>
        <source>Pendiente.</source>
      </segment>
    </unit>
  </file>
</xliff>
"""  # noqa: E501

# The same shape with the XLIFF namespace bound to a prefix: new elements must use it too.
XLIFF20_PREFIXED = """<?xml version="1.0" encoding="UTF-8"?>
<x:xliff xmlns:x="urn:oasis:names:tc:xliff:document:2.0" version="2.0" srcLang="es" trgLang="en">
  <x:file id="f1" original="kiosk">
    <x:unit id="k1">
      <x:segment>
        <x:source>La vendedora sonrió.</x:source>
        <x:target>The seller smiled; he waved.</x:target>
      </x:segment>
    </x:unit>
  </x:file>
</x:xliff>
"""

# TMX 1.4 (TMX 1.4b specification: <header srclang>, <tu tuid>, <prop type>, <tuv xml:lang>, <seg>, inline
# <bpt>, <ept>, <ph>, <hi>). Two documents named by the x-document property; unit 3 has no English variant.
TMX = """<?xml version="1.0" encoding="UTF-8"?>
<tmx version="1.4">
  <header creationtool="handmade" creationtoolversion="1" segtype="sentence" o-tmf="none" adminlang="en"
          srclang="es" datatype="plaintext"/>
  <body>
    <tu tuid="1">
      <prop type="x-document">depot</prop>
      <tuv xml:lang="es"><seg>La mecánica <hi type="name">Zuri Altuna</hi> revisó el tren.</seg></tuv>
      <tuv xml:lang="en-GB"><seg>Mechanic <hi type="name">Zuri Altuna</hi> checked the train.</seg></tuv>
    </tu>
    <tu tuid="2">
      <prop type="x-document">depot</prop>
      <tuv xml:lang="es"><seg>Estaba <bpt i="1">&lt;b&gt;</bpt>satisfecha<ept i="1">&lt;/b&gt;</ept>.</seg></tuv>
      <tuv xml:lang="en-GB"><seg><ph x="1">[1]</ph>He was <bpt i="1">&lt;b&gt;</bpt>satisfied<ept i="1">&lt;/b&gt;</ept>.</seg></tuv>
    </tu>
    <tu tuid="3">
      <prop type="x-document">bakery</prop>
      <tuv xml:lang="es"><seg>El panadero abrió temprano.</seg></tuv>
    </tu>
    <tu>
      <prop type="x-document">bakery</prop>
      <tuv xml:lang="es"><seg>Ella lo saludó.</seg></tuv>
      <tuv xml:lang="en-GB"><seg>She greeted him.</seg></tuv>
    </tu>
  </body>
</tmx>
"""  # noqa: E501


def evidence(side: str, seg_id: str, start: int, end: int, text: str, gender: str = "fem",
             kind: str = "agreement") -> dict:
    return {"side": side, "seg_id": seg_id, "start": start, "end": end, "text": text, "gender": gender,
            "kind": kind, "weight": 0.7, "rule": "predicative with copula"}


def finding(seg_id: str, start: int, end: int, text: str, kind: str = "contradiction",
            expected: str | None = "fem", found: str | None = "masc", confidence: float = 0.8,
            entity: str = "E1", message: str = "", evidence_items: list[dict] | None = None) -> dict:
    return {"kind": kind, "seg_id": seg_id, "start": start, "end": end, "text": text, "expected": expected,
            "found": found, "entity": entity, "confidence": confidence,
            "message": message or f"'{text}' contradicts the evidence", "evidence": evidence_items or []}


def result(doc_id: str, findings: list[dict], checked: int = 2, consistent: int = 1, segments: int = 2,
           src_lang: str = "es", tgt_lang: str = "en", labels: dict[str, str] | None = None) -> dict:
    counts = {k: sum(1 for f in findings if f["kind"] == k) for k in ("contradiction", "inconsistency",
                                                                         "assumption")}
    labels = labels or {"E1": "Ilune Garaikoa"}
    entities = [{"id": k, "label": v, "gender": None, "confidence": 0.9, "source_mentions": [],
                 "target_mentions": [], "evidence": []} for k, v in labels.items()]
    return {"doc_id": doc_id, "src_lang": src_lang, "tgt_lang": tgt_lang, "entities": entities,
            "findings": findings, "stats": {"segments": segments, "entities": len(entities),
                                            "target_references": checked + 1, "checked": checked,
                                            "consistent": consistent, "findings": counts}}


def write_jsonl(path: Path, objects: list[dict]) -> Path:
    path.write_text("".join(json.dumps(o, ensure_ascii=False) + "\n" for o in objects), encoding="utf-8")
    return path


def write_tsv(path: Path, rows: list[tuple[str, str, str, str]]) -> Path:
    lines = ["doc_id\tseg_id\tsource\ttarget", *("\t".join(r) for r in rows)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


# A two-document TSV set and results that flag words in it. "brisa" has a contradiction with evidence on both
# sides, an assumption and an inconsistency; "mirador" has none.
TSV_ROWS = [
    ("brisa", "1", "La piloto Ilune Garaikoa aterrizó en Berrenda.",
     "Pilot Ilune Garaikoa landed in Berrenda."),
    ("brisa", "2", "Estaba cansada, pero sonrió.", "He was tired, but smiled."),
    ("brisa", "3", "El médico llegó tarde.", "The doctor arrived late; he apologised and she left."),
    ("mirador", "1", "La guía abrió el mirador.", "The guide opened the viewpoint."),
]


def tsv_results() -> list[dict]:
    contradiction = finding("2", 0, 2, "He", evidence_items=[
        evidence("source", "1", 0, 2, "La", kind="morphology"),
        evidence("source", "2", 7, 14, "cansada"),
    ], message="'He' makes Ilune Garaikoa masc; the source says fem")
    assumption = finding("3", 25, 27, "he", kind="assumption", expected=None, found="masc", confidence=0.4,
                         entity="E2", message="'he' makes the doctor masc; nothing in the source says so")
    inconsistency = finding("3", 43, 46, "she", kind="inconsistency", expected=None, found="fem",
                            confidence=0.65, entity="E2",
                            evidence_items=[evidence("target", "3", 25, 27, "he", gender="masc",
                                                     kind="pronoun")])
    return [
        result("brisa", [contradiction, assumption, inconsistency], checked=3, consistent=1, segments=3,
               labels={"E1": "Ilune Garaikoa", "E2": "médico"}),
        result("mirador", [], checked=1, consistent=1, segments=1, labels={"E1": "guía"}),
    ]
