"""Whose statement a sentence is: this study's, other work's, general background, a plan, or a template's prompt.

Only what a document says about its own study can make an item reported. A reader tells the kinds apart by
citation markers ("[12]", "(Lee et al., 2020)"), by the subject ("we", "our", "this challenge", "participants"
against "previous studies", "the authors of", "Lee et al."), by modality ("will be explored in future work") and by
the section the sentence stands in; these are the signals used here. Each kind carries a factor that multiplies
the weight of the section the sentence stands in (see `matching.Scan.weight`).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

THIS_STUDY, OTHER_WORK, BACKGROUND, PLAN, TEMPLATE = "this-study", "other-work", "background", "plan", "template"
KINDS = (THIS_STUDY, OTHER_WORK, BACKGROUND, PLAN, TEMPLATE)

#: kind -> how much a sentence of that kind counts as evidence for the document itself. Other work and a
#: template's prompts never count; general statements and plans count a little, so that with a cue of this
#: study's nearby an item can still be partial.
FACTORS = {THIS_STUDY: 1.0, OTHER_WORK: 0.0, BACKGROUND: 0.5, PLAN: 0.4, TEMPLATE: 0.0}

# Citation markers as they come out of PDF, Word, Markdown and LaTeX: numeric brackets, author-year, pandoc keys.
_CITATION = re.compile(
    r"\[\s*\d{1,3}(?:\s*[,;–-]\s*\d{1,3})*\s*\]"  # [12], [3, 7], [4-6]
    r"|\[@[\w:.-]+"  # pandoc [@key]
    r"|(?:(?<=[A-Za-z]{3})|(?<=[.,;)\]])|(?<=\s))[⁰¹²³⁴⁵⁶⁷⁸⁹]+(?:[,–-][⁰¹²³⁴⁵⁶⁷⁸⁹]+)*(?![\w⁰¹²³⁴⁵⁶⁷⁸⁹])"  # "fractures¹⁴,¹⁵"; not m²
    r"|\bet\s+al\b\.?"  # Lee et al.
    r"|\(\s*(?:see\s+)?[A-Z][\w'’-]+(?:\s+(?:and|&)\s+[A-Z][\w'’-]+)?,?\s+(?:19|20)\d\d[a-z]?\s*[;)]"  # (Lee, 2020)
)

# The document speaking of itself: first person, "this study/challenge/dataset", the people of a benchmark.
_SELF = re.compile(
    r"\b(?:we|our|ours|us|here(?:in)?|in\s+this\s+(?:work|study|paper|article|thesis|dissertation|report|project|"
    r"challenge|competition|benchmark|dataset|task|track)|this\s+(?:work|study|paper|article|thesis|dissertation|"
    r"project|challenge|competition|"
    r"benchmark|dataset|data\s*set|corpus|database|task|track|edition|evaluation|analysis)|the\s+present\s+"
    r"(?:study|work)|the\s+(?:test|training|validation|development|hold-?out)\s+(?:set|data|cohort|split)|"
    r"participants?|participating|teams?|submissions?|organi[sz]ers?|the\s+(?:challenge|"
    r"competition|benchmark|leaderboard|organi[sz]ing\s+committee)|proposed\s+(?:method|model|approach|network)|"
    r"(?:is|are)\s+intended\s+(?:as|for|to)|(?:is|are)\s+designed\s+(?:to|for|as))\b",
    re.IGNORECASE,
)

# First person singular, as theses and student reports write: "my", and "I" as a subject ("I used", "I have"),
# never the numeral of "Table I" or "Type I" (hence case-sensitive "I" followed by a verb).
_SELF_SINGULAR = re.compile(
    r"\b[Mm]y\b|\bI\s+(?:[a-z]+ly\s+)?(?:have|had|am|was|will|would|could|can|did|do|use|used|chose|choose|found|"
    r"find|train|trained|test|tested|collect|collected|annotat[a-z]*|label[a-z]*|segment[a-z]*|implement[a-z]*|"
    r"perform[a-z]*|appl[a-z]+|select[a-z]*|evaluat[a-z]*|compar[a-z]*|obtain[a-z]*|download[a-z]*|split|divid[a-z]*|"
    r"measur[a-z]*|comput[a-z]*|calculat[a-z]*|decided|wanted|then|also)\b"
)

# Subjects that put a statement on someone else.
_OTHERS = re.compile(
    r"^\s*(?:(?:several|many|some|most|few|other|previous|prior|earlier|recent|existing|related|past|"
    r"numerous|various)\s+(?:\w+\s+){0,2}?(?:studies|works?|papers|methods|approaches|authors|researchers|"
    r"investigators|groups|challenges|competitions|benchmarks|datasets|efforts|reports|publications|"
    r"reviews|surveys)|(?:in|by)\s+(?:a\s+)?(?:previous|prior|earlier|recent|related|their|another|other)\b|"
    r"(?:these\s+authors|the\s+authors\s+of|[A-Z][\w'’-]+\s+et\s+al))\b"
    r"|\b(?:has|have|had)\s+been\s+(?:proposed|reported|shown|introduced|developed|suggested|used|"
    r"demonstrated|investigated|studied|described)\s+(?:by|in)\b"
    r"|\b(?:was|were)\s+(?:proposed|introduced|developed|reported)\s+(?:by|in)\s+(?!this\b|the\s+present\b)",
    re.IGNORECASE,
)

# Work not done: future work, hopes, hypotheses. "will" alone is not enough: proposals state their design so.
_PLAN = re.compile(
    r"\b(?:future\s+(?:work|research|studies|versions?|editions?|directions?)|in\s+(?:the\s+)?future|"
    r"we\s+(?:plan|intend|hope|aim)\s+to\s+(?:investigate|explore|study|extend|examine|evaluate\s+in\s+future)|"
    r"(?:would|could|might)\s+be\s+(?:explored|investigated|studied|addressed|considered|extended|interesting)|"
    r"remains?\s+to\s+be\s+(?:explored|investigated|studied|seen)|we\s+hypothesi[sz]e|"
    r"(?:is|are)\s+left\s+(?:for|to)\s+future)\b",
    re.IGNORECASE,
)

# A template's prompt: an instruction to the author, a bracketed placeholder, a form's question.
_TEMPLATE = re.compile(
    r"^\s*(?:\d+[.)]\s*|[-*•]\s*)?(?:please\s+)?(?:describe|provide|state|specify|indicate|list|explain|"
    r"justify|mention|give|report|include|summari[sz]e|name)\s+(?:the|how|what|whether|which|who|if|any|all|"
    r"your|a|an)\b"
    r"|^\s*(?:please|kindly)\s+(?:describe|provide|state|specify|indicate|list|explain|justify|give|report|"
    r"include|summari[sz]e|name|add|fill)\b"
    r"|\[(?:insert|describe|add|enter|your|name\s+of|number\s+of|e\.g\.)[^\]]{0,80}\]"
    # a draft's placeholder standing for a passage still to come: "[Results to be added]", "(TBD)"
    r"|^\s*[\[(][^\])]{0,80}?\b(?:to\s+be\s+(?:added|completed|written|filled\s+in|inserted|determined|confirmed|"
    r"announced|updated|decided)|TBD|TBA|TODO|FIXME)\b[^\])]{0,40}[\])]"
    r"|<(?:insert|describe|add|enter|your)[^>]{0,80}>"
    # a form's question that offers its own examples, as datasheet templates ask ("Who was involved in the data
    # collection process (e.g., students, crowdworkers, contractors)?"): the examples are the template's
    r"|\(\s*(?:e\.\s?g\.|for\s+example|such\s+as)[^)]*\)[^.!]*\?\s*[\"'’”)\]]*\s*$",
    re.IGNORECASE,
)

# General statements: what is usual or known, not what was done here.
_GENERAL = re.compile(
    r"\b(?:is|are)\s+(?:widely|commonly|frequently|often|usually|typically|generally)\s+(?:used|applied|"
    r"adopted|employed|accepted|regarded|considered|reported)\b"
    r"|\b(?:it\s+is\s+(?:well\s+)?known|is\s+known\s+to|in\s+general|in\s+clinical\s+practice|"
    r"worldwide|globally|each\s+year|every\s+year|per\s+year|annually|(?:the\s+)?leading\s+cause|"
    r"in\s+the\s+general\s+population|affects?\s+(?:about|around|approximately|over|more\s+than|nearly)?\s*[\d,.]+)",
    re.IGNORECASE,
)

# Details left to another document: a cited paper, a linked page, the dataset's own paper ("following the
# protocol described in [12]", "as defined in the challenge paper", "the guidelines are available here", "see the
# documentation"). A pointer inside the document itself (a section, table, figure or appendix) is not one.
_ELSEWHERE = (r"(?:(?:the|our|a|an|its|their)\s+)?(?:(?:original|accompanying|companion|previous|earlier|cited|"
              r"linked|separate|official|overview|challenge|competition|dataset|benchmark|task|source|reference|"
              r"following|[\w-]+'s)\s+)*(?:paper|papers|publication|publications|article|manuscript|documentation|"
              r"docs|repository|repo|website|web\s*site|web\s*page|webpage|page|link|url|data\s*card|datasheet|"
              r"github|wiki|pdf)\b"
              r"|\[\s*\d|\[@|\[[^\]]{1,60}\]\(|https?://|(?:ref(?:erence)?s?\.?\s*)\d|[A-Z][\w'’-]+\s+et\s+al\b")
_DEFERS = re.compile(
    r"\b(?:described|detailed|defined|explained|specified|documented|given|listed|provided|outlined|reported|"
    r"available|found|introduced|published)\s+(?:in\s+(?:more\s+|full\s+|further\s+)?detail\s+)?(?:in|at|on|"
    r"from|via|by|through)\s+(?:" + _ELSEWHERE + r")"
    r"|\b(?:available|found|described|given|documented)\s+(?:here|elsewhere|online)\b"
    r"|\b(?:see|refer\s+to|consult|please\s+see|please\s+refer\s+to)\s+(?:" + _ELSEWHERE + r")"
    r"|\b(?:the\s+same|identical|similar)\s+(?:[\w-]+\s+){0,2}?(?:protocol|guidelines?|procedure|criteria|"
    r"definitions?|instructions|rules)\s+as\s+(?:in|for|used\s+in|described\s+in|those\s+of|the\s+previous|"
    r"previous|earlier|\[)",
    re.IGNORECASE,
)


def defers(text: str) -> bool:
    """Whether a sentence leaves its details to another document (a citation, a link, "the paper")."""
    return bool(_DEFERS.search(text))


#: section roles whose sentences speak of others unless they say otherwise
_OTHER_ROLES = frozenset({"related-work"})
#: sections that frame a study: a sentence there speaks of this study only when it says so ("we", "our data");
#: a limitations section speaks of the study itself
_FRAMING_ROLES = frozenset({"introduction", "discussion", "requirements"})


@dataclass(frozen=True)
class Attribution:
    kind: str
    #: the signal that decided, in a few words, for --verbose and JSON
    why: str

    @property
    def factor(self) -> float:
        return FACTORS[self.kind]


def attribute(text: str, role: str = "body", kind: str = "paragraph") -> Attribution:
    """Whose statement `text` is, from its own words and the role of the section it stands in."""
    if kind == "heading":
        return Attribution(THIS_STUDY, "a heading")
    own = _SELF.search(text) or _SELF_SINGULAR.search(text)
    if _TEMPLATE.search(text) and not re.match(r"\s*(?:we|our|my)\b|\s*I\s", text, re.IGNORECASE):
        return Attribution(TEMPLATE, "a template's instruction, placeholder or question")
    if _PLAN.search(text):
        return Attribution(PLAN, "future work or a plan")
    cited = _CITATION.search(text)
    others = _OTHERS.search(text)
    if others and not own:
        return Attribution(OTHER_WORK, "names other work as its subject")
    if cited and not own:
        if role in _OTHER_ROLES or role in _FRAMING_ROLES:
            return Attribution(OTHER_WORK, "cites other work")
        # "The images come from the public X archive [7]." in a methods section: a cited source of this study
        return Attribution(THIS_STUDY, "cites a source in a section about this study")
    if role in _OTHER_ROLES:
        return (Attribution(THIS_STUDY, "speaks of this study") if own and re.search(
            r"\b(?:we|our|this\s+(?:work|study|paper))\b", text, re.IGNORECASE)
            else Attribution(OTHER_WORK, "in a section about other work"))
    if _GENERAL.search(text) and not own:
        return Attribution(BACKGROUND, "a general statement")
    if role in _FRAMING_ROLES and not own:
        return Attribution(BACKGROUND, "framing in the introduction or discussion, not about this study")
    return Attribution(THIS_STUDY, "speaks of this study" if own else "stands in a section about this study")
