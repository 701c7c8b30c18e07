"""Heading roles and section paths."""

from __future__ import annotations

import pytest

from checker.document import Block, Location
from checker.sections import assign_sections, heading_role


@pytest.mark.parametrize(
    "heading, role",
    [
        ("2 Materials and Methods", "methods"),
        ("III. EXPERIMENTS", "methods"),
        ("2.1 Data", "data"),
        ("Datasets", "data"),
        ("Evaluation protocol", "evaluation"),
        ("4 Results", "results"),
        ("Related Work", "related-work"),
        ("Acknowledgments", "acknowledgements"),
        ("References", "references"),
        ("Bibliography", "references"),
        ("Refrences", "references"),  # a misspelt heading still hides the reference list
        ("Materials & methods", "methods"),
        ("A fracture detector for wrists", None),
        ("2.2 Reference annotation", "data"),
        ("Reference standard and annotation process", "data"),
    ],
)
def test_heading_roles(heading, role):
    assert heading_role(heading) == role


def test_section_paths_follow_heading_levels():
    blocks = [
        Block("Methods", "heading", Location("f", line=1), level=1),
        Block("Data", "heading", Location("f", line=2), level=2),
        Block("We used scans.", "paragraph", Location("f", line=3)),
        Block("Results", "heading", Location("f", line=4), level=1),
        Block("It worked.", "paragraph", Location("f", line=5)),
    ]
    out = assign_sections(blocks)
    assert out[2].section == ("Methods", "Data") and out[2].role == "data"
    assert out[4].section == ("Results",) and out[4].role == "results"
    assert out[2].location_at(0).section == ("Methods", "Data")
