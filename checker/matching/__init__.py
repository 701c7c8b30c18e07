"""Document + checklist -> Scan: the spaCy pipeline (nlp), checklists loaded and validated (checklist), cues
compiled and run over the sentences (matcher, regexscan, regexcache), values read from hits (facts), and whose
statement each sentence is (attribution)."""
