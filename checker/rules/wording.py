"""How documents word counts, splits and shares: the patterns and word lists the count statements are read with."""

from __future__ import annotations

import regex

from ..matching.checklist import compile_regex
from ..core.words import builtin_words

#: the word lists are data: checklists/words.yaml (see checker.core.words)
_WORDS = builtin_words()


def _rx(src: str) -> regex.Pattern:
    return compile_regex(src)


#: split words as authors write them -> the split they name
_SPLIT_NAMES = (
    (r"internal\s+validation|internal\s+test(?:ing)?|held[- ]?out\s+test(?:ing)?|hold[- ]?out\s+test(?:ing)?|"
     r"holdout\s+test(?:ing)?|independent\s+test(?:ing)?", "test"),
    (r"external\s+(?:validation|test(?:ing)?)", "external"),
    (r"training|train", "training"),
    (r"development|dev", "development"),
    (r"validation|tuning|val", "validation"),
    (r"test(?:ing)?|held[- ]?out|hold[- ]?out|holdout", "test"),
)


_SPLIT_ALT = "|".join(f"(?:{a})" for a, _ in _SPLIT_NAMES)


_SET = r"(?:set|split|cohort|subset|partition|data\s*set|data|sample|group|portion)s?"


#: the split words compiled once (split_of runs for every split word of every list a document states)
_SPLIT_PATTERNS = tuple((regex.compile(pattern, regex.IGNORECASE), name) for pattern, name in _SPLIT_NAMES)


def split_of(word: str) -> str:
    w = " ".join(word.lower().split())
    for rx, name in _SPLIT_PATTERNS:
        if rx.fullmatch(w):
            return name
    return ""


CASE_UNITS = _WORDS.groups["case-units"]


ANNOTATOR_UNITS = _WORDS.groups["annotator-units"]


PROFESSION = regex.compile(r"(?:ologist|iatrist|ographer|ician|surgeon|resident|student|specialist|nurse|"
                           r"technician|technologist)$")


SITE_UNITS = _WORDS.groups["site-units"]


METHOD_UNITS = _WORDS.groups["method-units"]


SUBSET_WORDS = _WORDS.set("subset-words")


SITE_SUBSET = _WORDS.set("site-subset-words")


METHOD_SUBSET = _WORDS.set("method-subset-words")


APPROX_BEFORE = _rx(r"(?:\babout|\bapproximately|\bapprox\.?|\baround|\broughly|\bnearly|\balmost|\bover|"
                    r"\bmore\s+than|\bless\s+than|\bfewer\s+than|\bat\s+least|\bat\s+most|\bup\s+to|\bunder|"
                    r"\bbelow|\babove|\bsome|~|≈|>|<|≥|≤|\bonly\s+about)\s*$")


PART_BEFORE = _rx(r"\b(?:first|last|other|remaining|additional|another|further|extra|per|every|top|best|worst|"
                  r"next|previous)\s+$")


PLAN = _rx(r"\b(?:we\s+plan|plan\s+to|planned\s+to|future\s+work|in\s+(?:the\s+)?future|"
           r"would\s+(?:need|require|allow)|"
           r"for\s+example|for\s+instance|e\.g\.|such\s+as|hypothetical|suppose|imagine)\b")


BY_BEFORE = _rx(r"\b(?:by|from|between|among|of)\s+(?:the\s+|all\s+|these\s+)?$")


ANNOTATES_AFTER = _rx(r"^\s*(?:\([^()]{0,60}\)\s*)?,?\s*(?:(?:independently|separately|manually|each|all|then|also|"
                      r"together|jointly|blindly)\s+)?(?:annotated|annotate|segmented|segment|labell?ed|label|delineated|"
                      r"contoured|read|graded|marked|outlined|reviewed|drew|traced|were\s+(?:trained|asked|instructed|"
                      r"involved|recruited|blinded|employed)|performed|participated|took\s+part|provided|produced)\b")


STUDY_OF_READERS = _rx(r"\b(?:reader|observer)\s+(?:study|studies|performance|experiment)\b|\bMRMC\b")


SPLIT_ANCHOR_BEFORE = _rx(
   rf"(?:\b(?P<qual>[\w-]+)\s+)?\b(?P<split>{_SPLIT_ALT})(?:[- ](?:only|phase))?\s+{_SET}"
   r"(?:\s*\([^()]{0,40}\))?\s*(?:,\s*)?"
   r"(?:(?:of|with|contain(?:s|ed|ing)?|compris(?:es|ed|ing)|includ(?:es|ed|ing)|consist(?:s|ed|ing)?\s+of|"
   r"(?:is|was|are|were)\s+(?:comprised|composed|made\s+up)\s+of|ha[sd]|having|:|=|\(|(?:is|was)|totall?ing|"
   r"(?:is|was)\s+formed\s+(?:of|by))\s*)?"
   r"(?:a\s+total\s+of\s+|only\s+|exactly\s+|n\s*=\s*)?$"
)


SPLIT_ANCHOR_AFTER = _rx(
   r"^\s*(?:(?:were|was|are|is)\s+)?(?:(?:randomly\s+)?(?:used|reserved|kept|set\s+aside|held\s+out|included|assigned|"
   r"allocated|selected|chosen|sampled|placed|put)\s+)?(?:for|in|as|into|to)\s+(?:the\s+|our\s+)?"
   rf"(?P<split>{_SPLIT_ALT})(?:\s+{_SET}|ing)?\b"
)


TOTAL_ANCHOR_BEFORE = _rx(
   r"(?:\ba\s+total\s+of|\bin\s+total,?|\boverall,?|\baltogether,?|\btotall?ing|"
   r"(?:\b(?P<pre>[\w-]+)\s+)?\b(?:dataset|data\s+set|cohort|study\s+population|population|database|collection|"
   r"corpus|archive|study|sample)(?:\s+of\s+(?:the\s+)?(?:[\w-]+\s+){0,3}?(?:study|trial|project|registry))?"
   r"(?:\s*\([^()]{0,40}\))?,?\s+(?:(?:of|with|compris(?:es|ed|ing)|contain(?:s|ed|ing)?|"
   r"includ(?:es|ed|ing)|consist(?:s|ed|ing)?\s+of|(?:is|was)\s+(?:comprised|composed|made\s+up)\s+of|ha[sd]|"
   r"totall?(?:ing|ed))\s+(?:(?:[\w-]+\s+){1,3}(?:from|of)\s+)?)(?:a\s+total\s+of\s+)?|"
   r"\bwe\s+(?:(?:retrospectively|prospectively|consecutively)\s+)?(?:included|enrolled|recruited|collected|"
   r"gathered|obtained|analy[sz]ed|used)(?:\s+a\s+total\s+of)?)\s*$"
)


TOTAL_AFTER = _rx(r"^\s*(?:in\s+total|overall|altogether|in\s+all)\b")


SUBSET_AFTER = _rx(r"^\s*(?:,\s*)?(?:with(?!\s+{NUMBER})|without|who|whose|that|which|having|had|have|showing|"
                   r"presenting|diagnosed|positive|negative|affected|per|each)\b")


VERB_AFTER = _rx(r"^\s*(?:were|was|are|is)\s+(?P<verb>[a-z-]+)")


STATEMENT_VERBS = _WORDS.set("statement-verbs")


BREAKDOWN_AFTER = _rx(r"^[^.;]{0,60}?\b(?:and|while|whereas|,)\s+{NUMBER}\s+(?:(?:were|was|had|on|in|at|from|with|"
                      r"for|by)\b|(?:[\w-]+\s+)?(?:on|in|at|from|with)\b)")


#: "312 images from 100 patients", "1,968 patients with 2,412 series (6,105 images)": the second count belongs to
#: the same split as the first
CHAIN = _rx(r"^\s*(?:\(\s*(?:i\.e\.,?\s*|n\s*=\s*)?|from\s+|of\s+|with\s+)$")


PART_PRE = _WORDS.set("part-of-collection-words")


#: a document with several test sets (per task, per dataset) states several test-set sizes that do not conflict
SEVERAL_TEST_SETS = _rx(r"\b(?:two|three|four|five|six|several|multiple|both|each|separate|\d+)\s+(?:[\w-]+\s+)?"
                        r"(?:test(?:ing)?|held[- ]?out|hold[- ]?out|holdout|validation|evaluation)\s+"
                        r"(?:sets|cohorts|datasets|data\s+sets|splits)\b|\b(?:test|validation)\s+sets?\s+(?-i:[A-D])\b(?!-)")


#: headings of parts that describe different tasks or experiments, each with its own data
TASK_HEADING = _rx(r"\b(?:task|track|sub-?task|sub-?challenge|experiment|phase|stage|scenario)s?\b")


ANNOTATION_CONTEXT = _rx(r"\b(?:annotat\w*|segment\w*|label\w*|delineat\w*|contour\w*|outlin\w*|read\b|reads|"
                         r"grad(?:ed|ing)\b|mark(?:ed|ing)\b|review\w*|adjudicat\w*|drew|drawn|trac(?:ed|ing)|"
                         r"rater|observer|ground[- ]truth|reference\s+standard|manual\w*|independent\w*)")


METHOD_BEFORE = _rx(r"(?:\b(?:compar(?:e|es|ed|ing)|benchmark(?:s|ed|ing)?|rank(?:s|ed|ing)?|"
                    r"evaluat(?:e|es|ed|ing)|assess(?:es|ed|ing)?)\s+(?:the\s+|all\s+|these\s+)?|"
                    r"\b(?:comparison|benchmark|benchmarking|ranking|evaluation|assessment)\s+of\s+(?:the\s+|all\s+)?|"
                    r"\b(?:all|these)\s+)$")


METHOD_AFTER = _rx(r"^\s*(?:were|are|was)\s+(?:then\s+)?(?:compared|ranked|benchmarked|evaluated|assessed|tested|"
                   r"trained)\b|^\s*(?:participated|took\s+part|competed|submitted)\b")


SINGLE_SITE = _rx(r"\b(?:single|one|mono)[- ](?:centre|center|site|institution|hospital|institutional)\b|"
                  r"\bmonocentric\b|\bmono-centric\b")


#: the count is any number facts.NUMBER reads ("two-centre", "12-site", "twenty-one-hospital"): one number reader
N_SITE = _rx(r"\b(?P<n>{NUMBER})[- ](?:centre|center|site|institution|hospital)\b")


SPLIT_PAREN = _rx(rf"\b(?P<split>{_SPLIT_ALT})(?:\s+{_SET})?\s*\(\s*(?:n\s*=\s*)?(?P<n>{{NUMBER}})"
                  r"(?:\s+(?P<noun>[a-z-]+))?\s*\)")


SPLIT_WORD = _rx(rf"\b(?P<split>{_SPLIT_ALT})\b")


_NAMES = (rf"(?P<names>(?:(?:{_SPLIT_ALT})(?:ing)?\s*(?:,\s*(?:and\s+)?|\s+and\s+|/|&)\s*){{1,3}}"
          rf"(?:{_SPLIT_ALT})(?:ing)?)")


_NUMS = r"(?P<nums>{NUMBER}(?:\s*(?:,\s*(?:and\s+)?|\s+and\s+|/)\s*{NUMBER}){1,3})"


#: "the training, validation and test sets contain 3,500, 500 and 900 radiographs"
LIST_NAMES_FIRST = _rx(_NAMES + r"\s+(?:sets?|splits?|subsets?|partitions?|cohorts?|data)?\s*(?:contain(?:s|ed)?|"
                       r"ha(?:ve|d|s)|compris(?:e|es|ed)|include[sd]?|consist(?:s|ed)?\s+of|of|with|:|=|hold|held)\s+"
                       + _NUMS + r"(?:\s+(?P<noun>[\w-]+(?:\s+[\w-]+){0,2}))?")


#: "3,500, 500 and 900 radiographs for training, validation and testing"
LIST_NUMS_FIRST = _rx(_NUMS + r"(?:\s+(?P<noun>[\w-]+(?:\s+[\w-]+){0,2}?))?\s+(?:(?:were|are)\s+)?(?:(?:used|assigned|"
                      r"allocated|reserved|kept)\s+)?(?:for|to|in|into)\s+(?:the\s+)?" + _NAMES)


SKIP_ROLES = frozenset({"introduction", "related-work", "discussion", "limitations", "references"})


NEUTRAL_QUALIFIERS = _WORDS.set("neutral-test-set-qualifiers")


LIST_STOP = _WORDS.set("list-stop-words")


SHARE_OF = _rx(r"(?P<n>\d[\d,]*)\s*(?:/|\bof\b|\bout\s+of\b)\s*(?:the\s+)?(?P<m>\d[\d,]*)(?:\s+[\w-]+){0,3}?\s*"
               r"\(\s*(?P<p>{DECIMAL})\s*%\s*\)")


SHARE_OF_AFTER = _rx(r"(?P<p>{DECIMAL})\s*%\s*\(\s*(?P<n>\d[\d,]*)\s*(?:/|\bof\b|\bout\s+of\b)\s*(?:the\s+)?"
                     r"(?P<m>\d[\d,]*)(?:\s+[\w-]+){0,3}\s*\)")


SHARE = _rx(r"(?P<n>{NUMBER})(?:\s+[\w-]+){0,3}?\s*\(\s*(?P<p>{DECIMAL})\s*%\s*\)")


SHARE_AFTER = _rx(r"(?P<p>{DECIMAL})\s*%\s*\(\s*(?:n\s*=\s*)?(?P<n>{NUMBER})\s*(?:[\w-]+\s*)?\)")
