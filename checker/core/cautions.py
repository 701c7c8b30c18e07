"""The cautions every result carries, in one place: what studygap's findings show and what they do not.

Keyed by the kind of result (as the renderers' registry names it): one document's report, the committee's
screen, the corpus audit, the comparison of two versions, the agreement with a user's labels. Each output of
that kind (terminal, JSON, HTML, DOCX, ...) prints them as they are.
"""

from __future__ import annotations

#: the venue's rules come first, wherever several documents are read
VENUE = "The venue's own reporting requirements govern; this checklist does not replace them."

CAUTIONS: dict[str, tuple[str, ...]] = {
    "report": (
        "A complete report does not show that the study is sound: studygap finds what is written, not whether it "
        "is right.",
        "A person must still read the document; passages are found by wording and can be missed or misread.",
        "The journal's or venue's own reporting requirements govern; this checklist does not replace them.",
    ),
    "screen": (
        "Completeness scores are a triage aid for the people who then read the documents, not a decision about any "
        "proposal or paper.",
        "studygap finds what is written, not whether the study is sound; a person must still read each document.",
        VENUE,
    ),
    "audit": (
        "Rates describe what the documents' wording reports as found by studygap, not whether the studies are "
        "sound; check the tool against your own labelled sample first (studygap evaluate).",
        "A low rate is a prompt for people to read the documents, not a judgement of any proposal or paper.",
        VENUE,
    ),
    "compare": (
        "A change of status shows a change of wording that studygap recognises, not that the study itself "
        "improved; a person must still read the revision.",
        VENUE,
    ),
    "evaluation": (
        "These figures describe agreement with your labels on this sample of documents. On other documents, other "
        "kinds of documents or another labeller they can differ, and with few documents the intervals are wide.",
        "studygap is a triage aid: it points a person to what to read and decides nothing about a study. A person "
        "must still read each document.",
    ),
}
