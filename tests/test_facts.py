"""Value extraction: numbers in digits and words, quantities with units, and the generic facts of a sentence,
checked against reference libraries (num2words, pint) and the dataset descriptions the medmnist package ships."""

from __future__ import annotations

import ast
import importlib.util
import json
from pathlib import Path

import pytest
import regex
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st


from .conftest import medmnist_info
from checker.matching.facts import (
    COUNT,
    DECIMAL,
    MACROS,
    NUMBER,
    PERCENT,
    UNIT,
    Fact,
    Quantity,
    expand_macros,
    extract_facts,
    parse_number,
    parse_value,
)

FLAGS = regex.IGNORECASE | regex.V0  # how the matching engine compiles checklist regexes


def facts(text: str, kind: str | None = None) -> list[Fact]:
    return [f for f in extract_facts(text) if kind is None or f.kind == kind]


def values(text: str, kind: str) -> list:
    return [f.value for f in facts(text, kind)]


def counts(text: str) -> list[tuple[object, str | None]]:
    return [(f.value, f.noun) for f in facts(text, "count")]


# --- numbers against num2words ------------------------------------------------------------------------------

def test_number_words_round_trip_against_num2words():
    # source: the num2words package (English spelling of cardinals, e.g. "one thousand, two hundred and
    # thirty-four"); every count up to ten thousand, with and without "and", in three capitalisations
    from num2words import num2words

    wrong = []
    for n in range(10_001):
        words = num2words(n)
        for form in (words, words.replace(" and ", " "), words.capitalize(), words.title()):
            if parse_number(form) != n:
                wrong.append((n, form, parse_number(form)))
    assert wrong == []


def test_number_macro_matches_whole_num2words_spellings():
    # source: num2words, a sample of spellings; NUMBER must cover the whole phrase, not just its first word
    from num2words import num2words

    plain = regex.compile(expand_macros("{NUMBER}"))
    engine = regex.compile(expand_macros("{NUMBER}"), FLAGS)
    for n in list(range(0, 10_001, 37)) + [101, 115, 999, 1001, 1100, 2000, 9999, 10_000, 120_000, 1_000_000]:
        words = num2words(n)
        assert plain.fullmatch(words), words
        assert engine.fullmatch(words.capitalize()), words
        assert plain.fullmatch(words.title()), words  # NUMBER is case-insensitive on its own


@pytest.mark.parametrize("text,expected", [
    ("three", 3), ("Twenty-five", 25), ("twenty five", 25), ("1,000", 1000), ("12 000", 12000),
    ("12\u2009000", 12000), ("a single", 1), ("n = 3", 3), ("N=12", 12), ("1.5", 1.5), ("2.5k", 2500),
    ("one hundred and twenty", 120), ("ten thousand", 10000), ("a dozen", 12), ("1.2 million", 1_200_000),
    ("\u22123", -3), ("-0.25", -0.25), ("1.0", 1.0), ("B = 2000", 2000),
])
def test_parse_number_reads_digits_and_words(text, expected):
    got = parse_number(text)
    assert got == expected and type(got) is type(expected)


@pytest.mark.parametrize("text", ["", "three radiologists", "3D", "v2.1", "one two", "hello", "1.2.3", "twentyfive"])
def test_parse_number_refuses_what_is_not_one_number(text):
    assert parse_number(text) is None


# --- quantities against pint --------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def ureg():
    pint = pytest.importorskip("pint")
    return pint.UnitRegistry()


@pytest.mark.parametrize("text", [
    "2 mm", "1.5 mm", "0.5 cm", "3 µm", "3 μm", "10 um", "2 nm", "1 m", "0.25 millimeter", "2 millimetres",
    "1 micron", "4 centimetres", "0.8 mm",
])
def test_lengths_agree_with_pint(text, ureg):
    # source: pint's unit registry, ureg.Quantity(text).to("mm")
    q = parse_value("tolerance", text)
    assert isinstance(q, Quantity)
    assert q.in_mm() == pytest.approx(ureg.Quantity(text).to("mm").magnitude, rel=1e-9)


@pytest.mark.parametrize("text,expected", [
    ("1.5 px", Quantity(1.5, "px")), ("2 pixels", Quantity(2, "px")), ("3 voxels", Quantity(3, "voxel")),
    ("1 voxel", Quantity(1, "voxel")), ("two voxels", Quantity(2, "voxel")), ("5°", Quantity(5, "degree")),
    ("200 ms", Quantity(200, "ms")), ("2 mm³", Quantity(2, "mm³")), ("τ = 1 mm", Quantity(1, "mm")),
])
def test_pixel_and_voxel_units_which_pint_does_not_know(text, expected):
    q = parse_value("tolerance", text)
    assert q == expected
    assert q.in_mm() is None or q.unit in ("mm",)


# --- parse_value --------------------------------------------------------------------------------------------

@pytest.mark.parametrize("name,text,expected", [
    ("n", " three ", 3), ("n", "three radiologists", 3), ("n", "n = 4", 4), ("folds", "5-fold", 5),
    ("prevalence", "12%", Quantity(12, "%")), ("prevalence", "12 %", Quantity(12, "%")),
    ("prevalence", "12.5 percent", Quantity(12.5, "%")), ("prevalence", "twelve per cent", Quantity(12, "%")),
    ("split", "70/15/15", [70, 15, 15]), ("split", "80:20", [80, 20]), ("split", "80%/20%", [80, 20]),
    ("split", "75-25", [75, 25]), ("ratio", "60-20-20", [60, 20, 20]),
    ("experience", "3-5", {"low": 3, "high": 5}), ("experience", "3 to 5", {"low": 3, "high": 5}),
    ("experience", "between 3 and 5", {"low": 3, "high": 5}), ("experience", "3–5 years", {"low": 3, "high": 5}),
    ("tol", "2-4 mm", {"low": 2, "high": 4, "unit": "mm"}),
    ("software", "  version 1.3 ", "version 1.3"), ("metric", "HD95", "HD95"), ("x", "", ""),
])
def test_parse_value_gives_the_natural_value(name, text, expected):
    assert parse_value(name, text) == expected


# --- macros -------------------------------------------------------------------------------------------------

def test_expand_macros_leaves_quantifiers_and_unknown_braces_alone():
    src = r"(?P<n>{NUMBER})\s+\w{2,3}\s+{FOO}\s+{DECIMAL}{UNIT}|{PERCENT}"
    out = expand_macros(src)
    assert r"\w{2,3}" in out and "{FOO}" in out
    assert "{NUMBER}" not in out and "{DECIMAL}" not in out and "{UNIT}" not in out and "{PERCENT}" not in out
    assert MACROS == {"NUMBER": NUMBER, "COUNT": COUNT, "DECIMAL": DECIMAL, "UNIT": UNIT, "PERCENT": PERCENT}
    assert regex.compile(expand_macros(r"\{NUMBER\}")).fullmatch("{NUMBER}")  # an escaped brace stays literal


def test_the_sentence_prefilter_knows_every_macro():
    # regexscan names the macros itself (it cannot import facts); a macro it did not know would be read as the
    # literal text "{COUNT}" and its regexes would never be tried
    from checker.matching.regexscan import _MACRO_CHAR, required_word_sets

    assert set(_MACRO_CHAR) == set(MACROS)
    assert not any("{" in w for ws in required_word_sets(r"(?P<n>{COUNT})\s+test\s+images") for w in ws)


def test_macros_work_inside_checklist_patterns_as_the_engine_compiles_them():
    sites = regex.compile(expand_macros(r"(?P<sites>{NUMBER})\s+(?:hospitals|centres)"), FLAGS)
    assert sites.search("Images came from Three hospitals.").group("sites") == "Three"
    assert sites.search("from 12 000 hospitals").group("sites") == "12 000"
    assert not sites.search("in 2.5 hospitals")  # a decimal is not cut into a count
    tol = regex.compile(expand_macros(r"tolerance of (?P<t>{DECIMAL}\s?{UNIT})"), FLAGS)
    assert parse_value("t", tol.search("at a tolerance of 1.5 mm.").group("t")) == Quantity(1.5, "mm")
    # "M" and "MS" stay no units although the engine matches case-insensitively
    unit = regex.compile(rf"^\d+\s?(?:{UNIT})$", FLAGS)
    assert unit.match("5 mm") and unit.match("5 ms") and not unit.match("5 M") and not unit.match("5 MS")
    pct = regex.compile(expand_macros("{PERCENT}"), FLAGS)
    for text in ("12%", "12 %", "12.5 percent", "twelve per cent", "−3.5%"):
        assert pct.fullmatch(text), text
    assert not pct.fullmatch("12 percentage")


# --- extract_facts: each kind -------------------------------------------------------------------------------

@pytest.mark.parametrize("text,expected", [
    ("The reference was annotated by three radiologists.", [(3, "radiologist")]),
    ("Two board-certified radiologists outlined every lesion.", [(2, "radiologist")]),
    ("The test set holds 1,000 images.", [(1000, "image")]),
    ("Each image was read by a single annotator.", [(1, "annotator")]),
    ("Agreement was measured among n = 4 raters.", [(4, "rater")]),
    ("We included 120 patients (480 images).", [(120, "patient"), (480, "image")]),
    ("Images came from Twenty-five centres.", [(25, "centre")]),
    ("Three radiologists read the scans independently.", [(3, "radiologist")]),
    ("The readers (n = 5) were blinded.", [(5, "reader")]),
    ("115 and 16 CT scans formed the training and validation sets.", [(115, "scan"), (16, "scan")]),
    ("The cohort comprised 12 000 children.", [(12000, "child")]),
    ("1.2 million images were screened.", [(1_200_000, "image")]),
])
def test_counts_come_with_what_they_count(text, expected):
    assert counts(text) == expected


def test_count_text_and_offsets_quote_the_sentence():
    text = "The reference was annotated by two board-certified radiologists."
    (f,) = facts(text)
    assert (f.kind, f.text, f.noun) == ("count", "two board-certified radiologists", "radiologist")
    assert text[f.start:f.end] == f.text


def test_n_without_a_noun_is_its_own_kind():
    assert [(f.kind, f.value) for f in facts("The sample size was n = 120.")] == [("n", 120)]


@pytest.mark.parametrize("text,expected", [
    ("12% of the cases were positive.", [Quantity(12, "%")]),
    ("The prevalence of 12 % was low.", [Quantity(12, "%")]),
    ("Sensitivity was fixed at 90.5 percent.", [Quantity(90.5, "%")]),
    ("About twelve per cent of scans failed.", [Quantity(12, "%")]),
])
def test_percentages(text, expected):
    assert values(text, "percentage") == expected


def test_confidence_levels_and_page_layout_are_no_percentages():
    assert values("The 95% confidence interval was narrow (95% CI 0.81-0.86).", "percentage") == []
    assert values('![overview](fig.png){width="75%"}', "percentage") == []


@pytest.mark.parametrize("text,expected", [
    ("Surface Dice was computed at a tolerance of 2 mm.", [Quantity(2, "mm")]),
    ("The NSD used τ = 1 mm.", [Quantity(1, "mm")]),
    ("A detection was a hit when its centre lay within 5 mm of the reference.", [Quantity(5, "mm")]),
    ("Boundary errors under 1.5 px were ignored.", [Quantity(1.5, "px")]),
    ("We used a 2-mm tolerance and a 1 mm threshold.", [Quantity(2, "mm"), Quantity(1, "mm")]),
    ("A margin of two voxels was allowed.", [Quantity(2, "voxel")]),
    ("The tolerance τ was set to 2.", [2]),
    ("NSD at tolerances of 1, 2 and 4 mm.", [[Quantity(1, "mm"), Quantity(2, "mm"), Quantity(4, "mm")]]),
    ("Landmarks within ±2 mm counted as found.", [Quantity(2, "mm")]),
    ("NSD@2mm was reported.", [Quantity(2, "mm")]),
])
def test_tolerances_need_a_tolerance_word_nearby(text, expected):
    assert values(text, "tolerance") == expected


@pytest.mark.parametrize("text", [
    "Images were resampled to 1.5 mm isotropic resolution.",
    "The slice thickness was 3 mm and the pixel size 0.7 mm.",
    "Lesions smaller than 5 mm were excluded.",
    "Patches of 64mm×64mm×64mm were cropped.",
    "The boundary was drawn on 3 mm slices.",
    "The error within the boundary was 3 ± 2 mm.",
    "Flow within the vessel reached 40 cm/s.",
])
def test_sizes_and_resolutions_are_no_tolerances(text):
    assert values(text, "tolerance") == []


@pytest.mark.parametrize("text,expected", [
    ("We report the 95th percentile Hausdorff distance.", [95]),
    ("HD95 and the 99th percentile were computed.", [95, 99]),
    ("The 95% Hausdorff distance was used.", [95]),
    ("Intensities were clipped at the 0.5-percentile and 99.5-percentile.", [0.5, 99.5]),
    ("We used HD_{95}.", [95]),
    ("The ninety-fifth percentile of distances.", [95]),
])
def test_percentiles(text, expected):
    assert values(text, "percentile") == expected
    assert values(text, "percentage") == []  # the 95 of "95% Hausdorff" is no percentage


@pytest.mark.parametrize("text,expected", [
    ("Intervals came from 1,000 bootstrap samples.", 1000),
    ("We used bootstrapping with 10000 resamples.", 10000),
    ("B = 2000 bootstrap replicates were drawn.", 2000),
    ("The ranking was bootstrapped 500 times.", 500),
    ("Bootstrap resampling (1,000 iterations) of the test cases gave the intervals.", 1000),
    ("We used a bootstrap (n = 5000) over patients.", 5000),
    ("We drew two thousand bootstrap samples.", 2000),
])
def test_bootstrap_sizes(text, expected):
    assert values(text, "bootstrap") == [expected]
    assert counts(text) == []  # the resamples are not a count of data


def test_bootstrap_skips_the_data_counts_on_the_way():
    text = "We applied bootstrapping on 120 patients with 1000 resamples."
    assert values(text, "bootstrap") == [1000]
    assert counts(text) == [(120, "patient")]


@pytest.mark.parametrize("text,expected", [
    ("The data were split 70/15/15 into training, validation and test sets.", [70, 15, 15]),
    ("We used an 80:20 split.", [80, 20]),
    ("An 80%/20% split was used.", [80, 20]),
    ("Models were trained with a 75-25 train-test split.", [75, 25]),
    ("The images were split into training, validation and test sets (70%, 15% and 15%).", [70, 15, 15]),
    ("We split the images with a ratio of 7:1:2 into training, validation and test sets.", [7, 1, 2]),
    ("Training/validation/test sets of 1,188/98/298 shapes.", [1188, 98, 298]),
])
def test_splits(text, expected):
    assert values(text, "split") == [expected]
    assert values(text, "percentage") == []


def test_split_with_counted_noun():
    (f,) = facts("Our 812/102/203 patients were assigned at random.", "split")
    assert f.value == [812, 102, 203] and f.noun == "patient"


@pytest.mark.parametrize("text", [
    "Malignancy levels 1/2 were negative and 4/5 positive.",
    "The scan took place on 12/05/2019.",
    "The session began at 10:30.",
    "A positive-to-negative ratio of 1:9.",
    "Half (1/2) of the slices were discarded.",
])
def test_fractions_dates_and_times_are_no_splits(text):
    assert values(text, "split") == []


@pytest.mark.parametrize("text,expected", [
    ("We used 5-fold cross-validation.", [5]),
    ("A five-fold cross-validation was run.", [5]),
    ("Training used 10 folds.", [10]),
    ("Results are averaged over a tenfold cross validation.", [10]),
    ("We used k-fold cross-validation with k = 5.", [5]),
])
def test_folds(text, expected):
    assert values(text, "folds") == expected


@pytest.mark.parametrize("text", [
    "A two-fold increase in speed was observed.",
    "The method was 3-fold faster.",
    "Our contributions are three-fold.",
    "10-fold accelerated acquisitions were simulated.",
])
def test_folds_are_not_multiplications(text):
    assert values(text, "folds") == []


@pytest.mark.parametrize("text,expected,noun", [
    ("Readers had 3-5 years of experience.", {"low": 3, "high": 5}, "year"),
    ("Each case was read by between 2 and 4 readers.", {"low": 2, "high": 4}, "reader"),
    ("Patients were aged 18 to 90 years.", {"low": 18, "high": 90}, "year"),
    ("Two or three readers graded each image.", {"low": 2, "high": 3}, "reader"),
    ("Spacing varied from 0.5 to 1.5 mm.", {"low": 0.5, "high": 1.5, "unit": "mm"}, None),
    ("The sizes were (384−1,536) pixels wide.", {"low": 384, "high": 1536}, None),
])
def test_ranges(text, expected, noun):
    (f,) = facts(text, "range")
    assert (f.value, f.noun) == (expected, noun)
    assert counts(text) == []


@pytest.mark.parametrize("text", [
    "The data were collected between 2015 and 2019.",
    "Scans from 2015-2019 were used.",
    "See Figs. 3-5 and pages 12-20.",
    "As shown before [3-5], the method works.",
    "Dice improved from 0.81 to 0.86.",
    "Radiology 38(1): 280-290.",
    "J Imaging 6, 86-89 (1992).",
    "The scan date was 2019-03-12.",
    "Labels were 0 or 1.",
])
def test_year_spans_citations_and_changes_are_no_ranges(text):
    assert values(text, "range") == []


# --- extract_facts: false positives -------------------------------------------------------------------------

@pytest.mark.parametrize("text", [
    "The study was conducted in 2015.",
    "In 2015 patients were recruited at the clinic.",
    "As shown in Fig. 3 and Table 2, the results hold.",
    "Equation (3) defines the loss; see Section 4 and Eq. 2.",
    "This was reported earlier [12] and [3, 4].",
    "We used nnU-Net v2 and version 1.3 of the software with Python 3.",
    "The difference was significant (p = 0.03, p < 0.001, P-value of 0.05).",
    "Data came from the 2019 challenge on 12 March 2020.",
    "COVID-19 patients were scanned with a 3D protocol at 1.5T.",
    "A ResNet-50 backbone and a 12-month follow-up.",
    "Images of 3×28×28 and 512 x 512 pixels were used.",
    "The mean age was 54 ± 12 years.",
    "One can see that one of the readers disagreed.",
    "2 Methods",
    "1. Data collection",
    "Results 0.81 0.79 0.85 128 256 512 1024 2048 were tabulated.",
])
def test_references_years_versions_and_p_values_are_no_counts(text):
    assert counts(text) == []
    assert values(text, "n") == []


def test_a_count_can_still_equal_a_year_when_it_counts_something():
    assert counts("The organisers received 2015 images.") == [(2015, "image")]


# --- output contract ----------------------------------------------------------------------------------------

def test_facts_are_sorted_do_not_overlap_within_a_kind_and_serialise_deterministically():
    text = ("Three radiologists annotated 1,000 images (12% positive); Surface Dice at a tolerance of 2 mm, "
            "HD95, 1,000 bootstrap samples, a 70/15/15 split into training, validation and test sets, "
            "5-fold cross-validation, readers with 3-5 years of experience.")
    found = extract_facts(text)
    assert [f.start for f in found] == sorted(f.start for f in found)
    assert {f.kind for f in found} == {"count", "percentage", "tolerance", "percentile", "bootstrap", "split",
                                        "folds", "range"}
    for a in found:
        assert text[a.start:a.end] == a.text
        for b in found:
            if a is not b and a.kind == b.kind:
                assert a.end <= b.start or b.end <= a.start
    dumped = json.dumps([f.to_dict() for f in found], ensure_ascii=False)
    assert dumped == json.dumps([f.to_dict() for f in extract_facts(text)], ensure_ascii=False)
    tol = next(f for f in found if f.kind == "tolerance").to_dict()
    assert list(tol) == ["kind", "value", "text", "start", "end", "noun"]
    assert tol["value"] == {"value": 2, "unit": "mm"}


# --- real text: medmnist's bundled dataset descriptions ------------------------------------------------------



# Read by hand (medmnist 3.0.2): nine descriptions state the total number of samples, as images (chest, derma,
# oct, pneumonia, retina, breast, blood), cells (tissue) or adrenal glands (adrenal3d). PathMNIST states its two
# parts (100,000 + 7,180 image patches). The others count other things: CT scans (organ{a,c,s}mnist and
# organmnist3d: 115 + 16 + 70 scans), rib fractures (fracture3d, "around 5,000"), vessel segments (vessel3d:
# 1,694 + 215 = 1,909 against 1,908 samples in n_samples), or give no total (nodule3d, synapse3d).
STATES_TOTAL = {
    "chestmnist": "image", "dermamnist": "image", "octmnist": "image", "pneumoniamnist": "image",
    "retinamnist": "image", "breastmnist": "image", "bloodmnist": "image", "tissuemnist": "cell",
    "adrenalmnist3d": "gland",
}


def test_medmnist_totals_in_descriptions_agree_with_n_samples():
    info = medmnist_info()
    agreeing = {}
    for name, entry in info.items():
        total = sum(entry["n_samples"].values())
        for f in extract_facts(entry["description"]):
            if f.kind == "count" and f.value == total:
                agreeing[name] = f.noun
            if f.kind == "count" and f.noun == "image":
                # wherever a description counts images, it counts all of them
                assert f.value == total, (name, f)
    assert agreeing == STATES_TOTAL  # 9 of 18 descriptions state the total, and all 9 agree


def test_medmnist_parts_splits_and_other_units():
    info = medmnist_info()
    by_name = {name: extract_facts(entry["description"]) for name, entry in info.items()}

    def nouns(name: str, noun: str) -> list:
        return [f.value for f in by_name[name] if f.kind == "count" and f.noun == noun]

    path = info["pathmnist"]["n_samples"]
    assert nouns("pathmnist", "patch") == [path["train"] + path["val"], path["test"]]
    adrenal = info["adrenalmnist3d"]["n_samples"]
    assert [f.value for f in by_name["adrenalmnist3d"] if f.kind == "split"] == [
        [adrenal["train"], adrenal["val"], adrenal["test"]]]
    assert nouns("adrenalmnist3d", "patient") == [792]
    assert nouns("chestmnist", "patient") == [30805]
    for name in ("organamnist", "organcmnist", "organsmnist", "organmnist3d"):
        assert nouns(name, "scan") == [115, 16, 70], name
    assert nouns("vesselmnist3d", "segment") == [1694, 215]
    assert nouns("synapsemnist3d", "expert") == [3]
    # no dimension ("3×28×28"), glued name ("HAM10000", "ABC-ChestXray14") or "5-level" grade becomes a count
    for name, found in by_name.items():
        for f in found:
            if f.kind == "count":
                assert f.noun in {"image", "patch", "patient", "scan", "cell", "gland", "segment", "expert",
                                  "class", "category", "type", "label", "disease", "organ", "specimen", "slice",
                                  "model", "fracture"}, (name, f)


def test_medmnist_stated_ratios_match_the_shipped_split_sizes():
    info = medmnist_info()
    checked = 0
    for name, entry in info.items():
        n = entry["n_samples"]
        for f in extract_facts(entry["description"]):
            if f.kind != "split" or sum(f.value) > 20:
                continue
            ratio = [v / sum(f.value) for v in f.value]
            if len(ratio) == 3:  # "a ratio of 7:1:2 into training, validation and test set"
                shares = [n["train"] / sum(n.values()), n["val"] / sum(n.values()), n["test"] / sum(n.values())]
            else:  # "with a ratio of 9:1 into training and validation set"
                shares = [n["train"] / (n["train"] + n["val"]), n["val"] / (n["train"] + n["val"])]
            assert shares == pytest.approx(ratio, abs=0.015), name  # nodule3d: 0.19 for 0.2
            checked += 1
    assert checked == 11  # 7 descriptions state 7:1:2, 4 state 9:1


# --- robustness ---------------------------------------------------------------------------------------------

_PIECES = st.sampled_from([
    "three", "one hundred and", "twenty-five", "a single", "thousand", "n =", "B =", "τ =", "bootstrap", "fold",
    "-fold", "folds", "tolerance of", "within", "mm", "px", "µm", "%", "percent", "95th percentile", "HD95",
    "between", "and", "to", "or", "/", ":", "-", "–", "−", "×", "±", "[", "]", "(", ")", "Fig.", "Table",
    "version", "p <", "2015", "1,000", "12 000", "0.5", "patients", "images", "radiologists", "split", "train",
    "test", ".", ",", "\n", "\u2009",
])
_TEXT = st.one_of(
    st.text(max_size=120),
    st.lists(st.one_of(_PIECES, st.integers(0, 100_000).map(str), st.text(max_size=4)), max_size=30).map(" ".join),
)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_TEXT)
def test_extract_facts_never_raises_and_offsets_slice_back(text):
    found = extract_facts(text)
    for f in found:
        assert text[f.start:f.end] == f.text
        assert f.kind in {"count", "percentage", "tolerance", "percentile", "bootstrap", "split", "folds", "range",
                          "n"}
        json.dumps(f.to_dict())


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=60))
def test_parse_value_and_parse_number_never_raise(text):
    parse_number(text)
    parse_value("x", text)
