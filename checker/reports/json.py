"""The JSON report: one object per document (a list for several), byte-identical for the same inputs."""

from __future__ import annotations

import json
from typing import Sequence

from ..verdicts.report import Report


def dumps(data) -> str:
    return json.dumps(data, ensure_ascii=False, indent=2, allow_nan=False) + "\n"


def render(reports: Sequence[Report], options) -> str:
    if len(reports) == 1 and not options.many:
        return dumps(reports[0].to_dict())
    return dumps([r.to_dict() for r in reports])
