"""The trade's usual ways of stating a design fact, each read as a careful reader would, in every checklist that
asks it. The sentences are invented; each form is common practice in challenge rules, dataset cards and papers
(the source of each form is named beside it)."""

from __future__ import annotations

import pytest

from checker.engine import check_document, check_text


def _status(text: str, checklist: str, item: str) -> str:
    return next(it for it in check_text(text, checklist).items if it.id == item).status


MISSING_OUTPUT_RULES = [
    # the scoring rule for a case without an output, phrased as a condition on the case (common practice in
    # challenge rules)
    "If a segmentation mask is not provided for a case, its Hausdorff distance is set to the image diagonal.",
    "When the algorithm did not return a result for a case, we set its score to the lowest value observed.",
    "Any case not predicted by a team is given the lowest rank for that case.",
    "Predictions that are missing or unreadable are replaced by an all-background mask.",
    # as a condition on the whole submission: it must cover every case or it is not scored (common practice)
    "Submissions that do not contain predictions for all test images will be considered invalid.",
    "Teams must provide a prediction for each of the test cases, otherwise the submission is rejected.",
    "A submission must include results for all 50 test videos to be evaluated.",
    # question answering and language-model benchmarks: abstentions and unparseable answers (common practice in
    # their evaluation protocols)
    "Unanswered questions and answers that cannot be parsed are counted as incorrect.",
    # simulation and robotics benchmarks: missing episodes, runs that do not complete (common practice)
    "Partial submissions are allowed; missing rollout instances count as zero in the final score.",
    "The minimum score of 0 is given for any case which does not run or whose metrics cannot be calculated.",
]


@pytest.mark.parametrize("checklist", ["benchmark-proposal", "validation-study"])
@pytest.mark.parametrize("sentence", MISSING_OUTPUT_RULES)
def test_a_missing_output_rule_in_the_trades_words_is_reported(sentence, checklist):
    assert _status(sentence, checklist, "results.missing") == "reported"


@pytest.mark.parametrize("sentence", [
    "Predictions are provided for all test images in a single archive.",
    # missing input data and empty reference labels are not missing outputs (the labelling conventions)
    "Missing values in the clinical table were imputed with the median.",
    "During preprocessing, missing values were set to NaN and then filled with zeros.",
    "Where no annotator assigned a label to a post, its label is empty.",
    "The results for all 50 test videos are shown in Table 3.",
])
def test_text_near_missing_outputs_that_states_no_rule_is_not_reported(sentence):
    assert _status(sentence, "benchmark-proposal", "results.missing") != "reported"


def test_split_sizes_in_a_table_are_counts(tmp_path):
    # dataset cards give split sizes as a table, one split per row or per column (common practice on dataset
    # hubs); each row is read as its own passage, so each form must count on its own
    rows = tmp_path / "rows.md"
    rows.write_text("# Data\n\n| Split | Sentences | Tokens |\n|---|---|---|\n| Train | 39,501 | 950,112 |\n"
                    "| Test | 4,940 | 119,007 |\n", encoding="utf-8")
    columns = tmp_path / "columns.md"
    columns.write_text("# Data\n\n| Language | Train | Validation | Test |\n|---|---|---|---|\n"
                       "| English | 12,000 | 1,500 | 1,500 |\n", encoding="utf-8")
    results = tmp_path / "results.md"
    results.write_text("# Results\n\n| Method | Train | Test |\n|---|---|---|\n| Ours | 0.95 | 0.88 |\n"
                       "\n| Split | Accuracy |\n|---|---|\n| Test | 0.88 |\n| Train | 97 |\n", encoding="utf-8")
    def counts(path):
        report = check_document(path, "dataset-description")
        return next(it for it in report.items if it.id == "data.counts").status

    assert counts(rows) == "reported"
    assert counts(columns) == "reported"
    assert counts(results) == "missing"  # scores per split are not split sizes


DS, VS, BP = "dataset-description", "validation-study", "benchmark-proposal"

READINGS = [
    # datasheets state the size of a corpus with "there are" (common practice in dataset cards); a dataset that
    # defines no split is wholly counted by its total
    pytest.param(DS, "data.counts", "There are 2,000 unique instances in each language.", "reported", id="there-are"),
    pytest.param(DS, "data.counts", "In total, there are 1,422,914 sentences in the corpus.", "reported",
                 id="in-total-there-are"),
    pytest.param(DS, "data.counts", "There are 2 reasons for this choice.", "missing", id="there-are-no-unit"),
    # a split or a total counted in the data set's own unit, whatever the field (common practice: trajectories in
    # driving data, utterances in speech corpora, clips in video); score points and what each unit holds are not
    # the data set's size
    pytest.param(DS, "data.counts", "The training split has 300 clips.", "reported", id="split-in-own-unit"),
    pytest.param(DS, "data.counts", "Pedestrian trajectories (1,793 / 2,010)", "reported", id="unit-with-split-counts"),
    pytest.param(DS, "data.counts", "The release has 1,793 trajectories in total.", "reported", id="total-in-own-unit"),
    pytest.param(DS, "data.counts", "Scores: 50 points in total.", "missing", id="score-points-in-total"),
    pytest.param(DS, "data.counts", "Each scene has 3 trajectories in total.", "missing", id="what-each-unit-has"),
    pytest.param(DS, "data.counts", "Images were collected from 3 sites.", "missing", id="sites-are-no-size"),
    # who labelled, named by the kind of worker or team (common practice in dataset documentation): a background
    # without training or experience is partial, as careful readers label it
    pytest.param(DS, "reference.expertise", "The labels were collected through crowdsourcing.", "partial",
                 id="crowdsourced-labels"),
    pytest.param(DS, "reference.expertise", "Each clip was labelled by the in-house annotation team.", "partial",
                 id="annotation-team"),
    pytest.param(DS, "reference.expertise", "Professional annotators drew the boxes.", "partial",
                 id="professional-annotators"),
    pytest.param(DS, "data.counts", "The dataset contains 1,797 images of handwritten digits.", "reported",
                 id="total-no-split"),
    # a dataset that names its own split but leaves out the sizes reports only part of its counts (the
    # development set's labelling conventions: totals without the split sizes are partial)
    pytest.param(DS, "data.counts", "The dataset contains 1,797 images of handwritten digits. We recommend the "
                 "official split into training and test images.", "partial", id="total-official-split"),
    pytest.param(DS, "data.counts", "The dataset contains 1,797 images. Use the predefined train/val/test splits.",
                 "partial", id="total-predefined-splits"),
    # a split its source had is not the dataset's own
    pytest.param(DS, "data.counts", "The dataset contains 1,797 images; it is a copy of the test set of an older "
                 "collection.", "reported", id="total-source-split"),
    # who labelled, named by the means or the role without a count (common practice in dataset documentation)
    pytest.param(DS, "reference.annotators", "Relation labels were assigned using crowd workers.", "partial",
                 id="crowd-workers"),
    pytest.param(DS, "reference.annotators", "We enrolled native speakers as human annotators to correct every "
                 "transcription.", "partial", id="as-human-annotators"),
    pytest.param(DS, "reference.annotators", "The final cell type was determined by a specialist.", "partial",
                 id="a-specialist"),
    pytest.param(DS, "reference.annotators", "Labels were assigned using a rule-based script.", "missing",
                 id="a-script"),
    # an unnumbered plural of annotators, after an adverb (common practice in challenge and dataset pages)
    pytest.param("benchmark-proposal", "reference.annotators", "Each slide is annotated in detail by several expert "
                 "pathologists.", "partial", id="several-experts"),
    pytest.param(DS, "reference.annotators", "All clips were labelled independently by multiple raters.", "partial",
                 id="multiple-raters"),
    # ... as a team of annotators, as the document's own authors, or as the people who transcribed the data (common
    # practice in dataset cards and papers)
    pytest.param(DS, "reference.annotators", "Every frame was marked by a group of trained annotators.", "partial",
                 id="a-group-of-annotators"),
    pytest.param(DS, "reference.annotators", "All clips were labelled by the authors.", "partial", id="the-authors"),
    pytest.param(DS, "reference.annotators", "The interviews were transcribed by students of the institute.",
                 "partial", id="transcribed-by-students"),
    # ... or as a service, a team or a kind of worker (common practice in dataset cards)
    pytest.param(DS, "reference.annotators", "The transcriptions are done by a data company.", "partial",
                 id="done-by-a-company"),
    pytest.param(DS, "reference.annotators", "Skin types were labelled through two data annotation services.",
                 "partial", id="annotation-services"),
    pytest.param(DS, "reference.annotators", "The labels were collected from crowd and in-house workers.",
                 "partial", id="in-house-workers"),
    # people who check labels are annotators too (common practice in dataset documentation)
    pytest.param(DS, "reference.annotators", "Every transcribed line was inspected by two independent reviewers.",
                 "reported", id="two-reviewers"),
    pytest.param(DS, "reference.annotators", "Results are provided by the organisers.", "not-applicable",
                 id="not-a-labeller"),
    # releasing every annotator's labels apart is a design statement about fusion (common practice for
    # subjective labels)
    pytest.param(DS, "reference.fusion", "Each conversation was annotated by two workers. Both annotations are "
                 "included in this collection.", "reported", id="both-annotations-included"),
    pytest.param(DS, "reference.fusion", "All images are included in the archive.", "not-applicable",
                 id="not-annotations"),
    # accuracy as a virtue of annotations or text, as annotation guidelines and datasheets use the word (common
    # practice), is no metric; accuracy as the metric still is one
    pytest.param(VS, "metrics.definition", "Annotators follow a fixed process for each document to ensure "
                 "consistency and accuracy.", "missing", id="ensure-accuracy"),
    pytest.param(VS, "metrics.definition", "In the hand-corrected set, captions were edited for accuracy using "
                 "rule-based edits.", "missing", id="edited-for-accuracy"),
    pytest.param(VS, "metrics.definition", "We report the classification accuracy on the test set.", "reported",
                 id="accuracy-metric"),
    pytest.param(VS, "metrics.definition", "Models were compared for accuracy on the test set.", "reported",
                 id="compared-for-accuracy"),    # the statistician's bootstrap is rank uncertainty; the verb and a random forest's bootstrap samples are not
    # (common practice in statistics sections, and in machine-learning and challenge texts)
    pytest.param(VS, "ranking.uncertainty", "Confidence intervals of the Dice differences between the methods were "
                 "computed from 1,000 bootstrap resamples of the test cases.", "reported", id="bootstrap-intervals"),
    pytest.param(VS, "ranking.uncertainty", "The two models were compared with a paired bootstrap of their AUC.",
                 "reported", id="paired-bootstrap"),
    pytest.param(VS, "ranking.uncertainty", "Participants may bootstrap their solutions from the models of the "
                 "previous phase and compare their scores.", "missing", id="bootstrap-the-verb"),
    pytest.param(VS, "ranking.uncertainty", "Each tree of the random forest draws bootstrap samples of the training "
                 "data; its performance is measured by accuracy.", "missing", id="random-forest-bootstrap"),
    # a draft's placeholder is no statement (common practice in drafts: "[to be added]", "(TBD)")
    pytest.param(VS, "ranking.uncertainty", "[Statistical tests of the differences between methods to be added]",
                 "missing", id="placeholder"),
    # a rule on external data stated with a modal (common practice in challenge rules)
    pytest.param(BP, "data.external-policy", "Participants' models could not be trained on external data.",
                 "reported", id="could-not-be-trained"),
    # the same rule in the other usual words of challenge rules: outside information or resources allowed, data
    # collected by the teams, only the organisers' data (common practice in shared-task and challenge pages)
    pytest.param(BP, "data.external-policy", "Teams may freely use any outside resources, such as other corpora or "
                 "lexicons.", "reported", id="may-freely-use-resources"),
    pytest.param(BP, "data.external-policy", "You are allowed to use external information when building your "
                 "runs.", "reported", id="external-information-allowed"),
    pytest.param(BP, "data.external-policy", "Only the images provided by the organizers can be used for training.",
                 "reported", id="only-organisers-data"),
    pytest.param(BP, "data.external-policy", "Teams may also collect additional data of their own.", "reported",
                 id="may-collect-more-data"),
    # a paper's backbone initialised on a standard public image set discloses its pretraining (common practice in
    # method sections)
    pytest.param(VS, "data.external-policy", "All detectors used an ImageNet-initialized backbone.", "reported",
                 id="imagenet-initialised"),
    # a datasheet that names metrics without evaluating anything does not report an evaluation (the labelling
    # conventions: evaluation items are not-applicable for a datasheet); one that evaluates baselines does
    pytest.param(DS, "metrics.definition", "Each image is labelled benign or malignant; accuracy and sensitivity "
                 "are the usual measures for such labels.", "not-applicable", id="datasheet-names-metrics"),
    pytest.param(DS, "metrics.definition", "Baseline models are evaluated with the mean absolute error on the test "
                 "set.", "reported", id="datasheet-evaluates-baselines"),    # a licence, a release and weights of the data or code, not a software key, a button or weights being trained
    # (common practice in dataset cards and papers)
    pytest.param(DS, "availability.data-code", "The dataset is released under the MIT license.", "reported",
                 id="data-licence"),
    pytest.param(DS, "availability.data-code", "The trained model weights are publicly available.", "reported",
                 id="weights-available"),
    pytest.param(DS, "availability.data-code", "Every licence number in the notes is annotated as an identifier.",
                 "missing", id="licence-number"),
    pytest.param(DS, "availability.data-code", "When the left mouse button is released, a window asks for the "
                 "entity type.", "missing", id="button-released"),
    pytest.param(VS, "availability.data-code", "The network weights are optimised with stochastic gradient "
                 "descent.", "missing", id="weights-optimised"),
    # a paper that ranks features or patients ranks no methods (the labelling conventions: ranking items are
    # not-applicable for a single-method paper); one that ranks its compared models does
    pytest.param(VS, "ranking.method", "We rank features by their importance and order patients by their risk.",
                 "not-applicable", id="ranks-features"),
    pytest.param(VS, "ranking.method", "The five models were ranked by their mean AUC.", "reported",
                 id="ranks-models"),
    # a metric built on ranks is no rule for ordering the methods (common practice in retrieval benchmarks); ranking
    # the teams by it is
    pytest.param(BP, "ranking.method", "Runs are scored by mean reciprocal rank, that is the average rank of the "
                 "first relevant document over all queries.", "partial", id="reciprocal-rank-metric"),
    pytest.param(BP, "ranking.method", "Teams are ordered by their mean reciprocal rank on the hidden queries.",
                 "reported", id="ranked-by-reciprocal-rank"),
    # organisers who receive results or answer e-mails set no rule on their own taking part (common practice in
    # challenge pages); a rule names their eligibility
    pytest.param(BP, "governance.organizer-participation", "Participants submit their outputs by email to the task "
                 "organisers, who compute the scores.", "missing", id="submit-to-organisers"),
    pytest.param(BP, "governance.organizer-participation", "Organisers may participate but are not eligible for "
                 "prizes.", "reported", id="organisers-may-participate"),
    # organisers who approve registrations, list their affiliations or publish the participating teams' runs set
    # no rule on their own taking part either (common practice in challenge pages)
    pytest.param(BP, "governance.organizer-participation", "The organisers review each registration form and "
                 "confirm your participation by e-mail.", "missing", id="organisers-approve-participation"),
    pytest.param(BP, "governance.organizer-participation", "Organizing committee | Affiliation | Role",
                 "missing", id="organisers-affiliation-table"),
    pytest.param(BP, "governance.organizer-participation", "After the workshop the organizing team releases its "
                 "scoring scripts together with the final runs of every participating team.", "missing",
                 id="organisers-release-participants-runs"),
    pytest.param(BP, "governance.organizer-participation", "Members of the organising institutions may take part, "
                 "but their entries are listed out of competition.", "reported", id="organisers-may-take-part"),
    # the legal terms of a contest, where technical failures may cancel it (common practice in contest terms), say
    # nothing about a case without an output
    pytest.param(BP, "results.missing", "The host reserves the right to cancel or suspend the contest if it cannot "
                 "run as planned because of computer viruses, tampering or technical failures.", "missing",
                 id="contest-terms-technical-failures"),
    # where the data come from, said by how and where they were gathered or by the public set used (common practice
    # in papers and dataset cards); naming the public dataset a paper used is its data source (the development
    # set's labelling conventions)
    pytest.param(DS, "data.source", "Participants were recruited through social media advertisements.",
                 "reported", id="recruited-through"),
    pytest.param(DS, "data.source", "Essays were gathered through a regional writing portal.", "reported",
                 id="gathered-through-a-portal"),
    pytest.param(VS, "data.source", "All experiments were conducted on the Harbour Street object detection dataset.",
                 "reported", id="conducted-on-the-named-dataset"),
    pytest.param(VS, "data.source", "Here, the public Northfield Lung dataset will be used.", "reported",
                 id="named-dataset-will-be-used"),
    pytest.param(VS, "data.source", "We used the default settings of the detector.", "missing",
                 id="used-the-settings"),
    # an annotation guideline states its procedure as instructions to the annotators: the task, what to choose for
    # each unit and how many labels a unit may get (common practice in annotation manuals and crowdsourcing task
    # pages)
    pytest.param(DS, "reference.protocol", "Your task is to label each tweet with the emotion it expresses most "
                 "strongly.", "reported", id="your-task-is-to-label"),
    pytest.param(DS, "reference.protocol", "Annotators should assign exactly one of the five categories to each "
                 "sentence.", "reported", id="annotators-should-assign-one-category"),
    pytest.param(DS, "reference.protocol", "Each utterance receives a single label from the intent list.",
                 "reported", id="each-unit-receives-one-label"),
    pytest.param(DS, "reference.protocol", "Several labels may be selected for one clip when more than one sound "
                 "is heard.", "reported", id="several-labels-may-be-selected"),
    pytest.param(DS, "reference.protocol", "We asked the raters whether each answer was supported by the passage.",
                 "reported", id="we-asked-the-raters"),
    # a challenge's instructions to its participants are no annotation procedure (common practice in challenge
    # pages)
    pytest.param(BP, "reference.protocol", "The reference masks were drawn by two radiologists. Your task is to "
                 "submit one prediction file with a label for every test image.", "partial",
                 id="your-task-is-to-submit"),
    # a paper names the public set it builds on or was tested on, and a dataset card says where its recordings
    # come from (common practice in papers and dataset cards)
    pytest.param(VS, "data.source", "Our detector leverages the Harbour Birds corpus.", "reported",
                 id="leverages-the-named-corpus"),
    pytest.param(VS, "data.source", "We evaluate the model on Northfield Street dataset and report the mean score.",
                 "reported", id="evaluated-on-a-named-dataset"),
    pytest.param(DS, "data.source", "The recordings originate from two coastal field stations.", "reported",
                 id="recordings-originate-from"),
    # a set made from another public one, said to come from it, names that set only (the development set's
    # labelling conventions)
    pytest.param(DS, "data.source", "All images come from the Harbour Crops dataset.", "partial",
                 id="images-come-from-a-named-dataset"),
    pytest.param(VS, "data.source", "We evaluate the model on held-out data from the same distribution.",
                 "missing", id="evaluated-on-held-out-data"),
    # what the labels are, without how they were made, is part of the protocol only: the classes the annotations
    # cover, the tagset, what the annotations consist of (the development set's labelling conventions); the classes
    # a classifier is trained on are no word about the reference (common practice)
    pytest.param(DS, "reference.protocol", "The images come with annotations for 23 object classes.", "partial",
                 id="annotations-for-n-classes"),
    pytest.param(DS, "reference.protocol", "The tagset has nine entity types.", "partial", id="the-tagset"),
    pytest.param(DS, "reference.protocol", "Annotations include segmentation masks of hands and tools, as well as "
                 "keypoints.", "partial", id="annotations-include"),
    pytest.param(VS, "reference.protocol", "We trained the classifier for 30 epochs on 4 classes.", "missing",
                 id="trained-on-n-classes"),
    # a data set sized in its own units, whatever they are (common practice in dataset cards and corpus papers);
    # what describes the data (classes, columns) is no count of it
    pytest.param(DS, "data.counts", "The corpus contains 2,720 extracts, each with seven annotations.", "reported",
                 id="corpus-contains-n-extracts"),
    pytest.param(DS, "data.counts", "The collection comprises 64 films from three decades.", "reported",
                 id="collection-comprises-n-films"),
    pytest.param(DS, "data.counts", "The dataset contains 14 classes of findings.", "missing",
                 id="dataset-contains-n-classes"),
    # a device or an acquisition is named with its own words, not by a paper's deadline or by work "performed on"
    # a server or on levels (common practice: competition timelines ask for camera-ready papers; evaluation
    # protocols say where and how scoring is performed)
    pytest.param(BP, "data.source", "We describe the timeline of the challenge. Camera-ready papers are due on "
                 "25 July.", "not-applicable", id="camera-ready-is-no-camera"),
    pytest.param(BP, "data.source", "Evaluation in this task is performed on three levels: incident, document and "
                 "mention.", "not-applicable", id="evaluation-performed-on-levels"),
    pytest.param(DS, "data.source", "The corpus has 40 hours of speech. Data collection was performed using "
                 "smartphones at two clinics.", "reported", id="collection-performed-using"),
    # a network applied slice by slice is no annotation procedure; people who draw slice by slice follow one
    # (common practice in segmentation papers)
    pytest.param(VS, "reference.protocol", "Reference tumour masks were available for all cases. We applied the 2D "
                 "U-net slice by slice to the whole dataset.", "missing", id="network-applied-slice-by-slice"),
    pytest.param(VS, "reference.protocol", "Two radiologists outlined each tumour slice by slice.", "reported",
                 id="outlined-slice-by-slice"),
    # "fine-tune" a size or a hyperparameter is no pretraining (common practice in student reports); a rule
    # against private data sets is a rule on extra data (common practice in challenge rules)
    pytest.param(VS, "data.external-policy", "Additionally, more time to fine tune sizes of test/training set could "
                 "have improved the performance.", "missing", id="fine-tune-a-size"),
    pytest.param(VS, "data.external-policy", "We fine-tuned the learning rate and the batch size on the validation "
                 "set.", "missing", id="fine-tune-a-hyperparameter"),
    pytest.param(VS, "data.external-policy", "We fine-tuned the network from ImageNet weights on our training "
                 "images.", "reported", id="fine-tune-a-network"),
    pytest.param(BP, "data.external-policy", "Participants may use public data; the usage of any private dataset "
                 "during the development of the methods is not allowed.", "reported", id="private-dataset-not-allowed"),
    # one ranking per metric is a ranking rule (common practice on leaderboards that give no combined score)
    pytest.param(BP, "ranking.method", "The leaderboard ranks teams separately for each metric (no weighting).",
                 "reported", id="ranked-for-each-metric"),
    # a missing volume scored as zero (common practice in segmentation challenges' scoring programs)
    pytest.param(BP, "results.missing", "Missing volumes receive a score of zero.", "reported",
                 id="missing-volumes-score-zero"),
    # how several people's labels become one: averaged, thresholded on the share who agree, or a primary coder
    # whose labels stand while a second coder only measures reliability (common practice in rating, crowd
    # labelling and behavioural coding studies); one labeller per item is a design
    pytest.param(BP, "reference.fusion", "Three raters scored every video. Rater annotations will be averaged.",
                 "reported", id="rater-annotations-averaged"),
    pytest.param(DS, "reference.fusion", "Each image was labelled by five workers. Labels were aggregated across "
                 "workers.", "reported", id="aggregated-across-workers"),
    pytest.param(DS, "reference.fusion", "Each pair was judged by 20 annotators. Pairs where more than 60% of the "
                 "annotators marked a match are positives.", "reported", id="share-of-annotators-threshold"),
    pytest.param(VS, "reference.fusion", "A primary coder completed annotation for the full length of the video, "
                 "while an independent reliability coder completed annotation for the first thirty minutes of each "
                 "video.", "reported", id="primary-and-reliability-coder"),
    pytest.param(DS, "reference.fusion", "Sites were mapped one time by one individual labeller.", "reported",
                 id="one-individual-labeller"),
    pytest.param(VS, "reference.fusion", "The scores were averaged over five runs.", "not-applicable",
                 id="averaged-over-runs"),
    # a year after a name is the edition, not a count ("the BraTS 2021 test scans", common practice in challenge
    # pages); a batch, a collage or a maximum of a few images is no data set
    pytest.param(BP, "data.counts", "The Harbour 2021 test scans will not be made available to the participating "
                 "teams.", "not-applicable", id="edition-year-is-no-count"),
    pytest.param(BP, "data.counts", "The Harbour 2019 training images are provided as JPEG files.", "missing",
                 id="edition-year-training-images"),
    pytest.param(VS, "data.counts", "Figure 9 shows a batch of 5 testing images.", "missing", id="batch-of-images"),
    pytest.param(DS, "data.counts", "Here we present a collage of six representative ultrasound images from the "
                 "dataset.", "missing", id="collage-of-images"),
    # the unit once, then each split's size (common practice in papers)
    pytest.param(VS, "data.counts", "We used a cohort of 300 patients, 200 for training and 100 for testing.",
                 "reported", id="n-for-training-m-for-testing"),
    # which submission counts and the time a submission may take are submission rules (common practice in
    # challenge rules)
    pytest.param(BP, "governance.submission-policy", "Participants submit Docker containers. Note: the highest "
                 "version number tagged image will be used for the final evaluation of your model.", "reported",
                 id="highest-version-image-is-used"),
    pytest.param(BP, "governance.submission-policy", "Participants submit Docker containers. A successful "
                 "submission MUST run a full evaluation loop (start-to-submission) on a p3.2xlarge machine in less "
                 "than 90 minutes.", "reported", id="must-run-within-a-time-budget"),
    # a reproducibility statement that lists what is shared before saying it is available (common practice in
    # journals' data availability statements); the usual post-hoc tests compare methods
    pytest.param(VS, "availability.data-code", "Analyses were performed using R version 4.0.3.[12] Data as well "
                 "as details about how to access the code and a reproducible computing environment required to "
                 "verify the results is available.[13]", "reported", id="data-and-code-listed-are-available"),
    pytest.param(BP, "ranking.uncertainty", "Teams are compared by mean opinion score. Differences larger than "
                 "Fisher's least significant difference are significant.", "reported",
                 id="least-significant-difference"),
]


@pytest.mark.parametrize("checklist, item, text, status", READINGS)
def test_the_trades_usual_phrasing_is_read_as_a_careful_reader_would(checklist, item, text, status):
    assert _status(text, checklist, item) == status


def test_releasing_every_annotators_labels_unmerged_is_a_fusion_design():
    # keeping each annotator's labels apart is a design statement, like a merging rule (common practice for
    # subjective labels)
    text = "Each image was labelled by three annotators. We provide the full, non-aggregated dataset."
    assert _status(text, "dataset-description", "reference.fusion") == "reported"


def test_annotation_guidelines_are_taken_for_a_dataset_description():
    # a dataset's annotation guidelines or codebook speak to annotators in the trade's usual imperative ("annotators
    # should ...", "do not annotate ...", "the tagset"), not of a method: the checklist choice takes them for the
    # dataset description they belong to (common practice in annotation manuals)
    from checker.engine import choose_checklist
    from checker.matching.nlp import parse_blocks

    text = ("Annotation guidelines for the Harbour clinic notes\n\nAnnotators should mark every medication name. "
            "Dosages should not be annotated as medications, and do not annotate negated findings.\n\n"
            "The tagset has four labels: DRUG, DOSE, ROUTE and FREQUENCY. In this study we compared two rounds.")
    cid, why = choose_checklist(list(parse_blocks(text.split("\n\n"))))
    assert cid == "dataset-description", why


def test_a_datasheet_that_only_names_metrics_says_why_its_quotes_do_not_count():
    # the quotes stay, so that a reader sees what was set aside, and the reason says why
    text = "Each image is labelled benign or malignant; accuracy and sensitivity are the usual measures for such labels."
    item = next(it for it in check_text(text, DS).items if it.id == "metrics.definition")
    assert item.status == "not-applicable" and item.evidence
    assert item.reason == ("not applicable: the document evaluates no methods on the data (the quoted passages only "
                           "mention the topic)")


@pytest.mark.parametrize("sentence, status", [
    ("DenseNet performed best on the test set.", "partial"),
    ("The random forest outperformed all other methods in accuracy.", "partial"),
    ("The random forest achieved the highest accuracy on the test set.", "partial"),
    ("Accuracy was reported on the test set.", "missing"),
])
def test_an_informal_order_among_compared_methods_is_a_partial_ranking(sentence, status):
    # a paper that compares several methods and names the best one without a rule is read as a partial ranking
    # by careful readers (the labelling conventions; common practice in student and journal papers). The cues
    # find the statement; the judge then weighs it with the rest of the document, so the cues are asked here.
    from checker.core.config import Config

    text = "We compared four methods on the same split. " + sentence
    item = next(it for it in check_text(text, VS, Config(judge="cues")).items if it.id == "ranking.method")
    assert item.status == status
