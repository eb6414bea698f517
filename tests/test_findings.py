"""Findings are data in the domain and words only in export/: every kind has its words.

A finding kind added to the analysis, design or claims layer without words in
``symfilt/export`` would print a KeyError instead of a sentence; these checks catch it
when the kind is added, not when a user first meets it.
"""

from __future__ import annotations

import pytest

from symfilt import catalogue
from symfilt.analysis.findings import KINDS, Finding, finding
from symfilt.analysis.stage import analyse
from symfilt.claims.diagnosis import FINDING_KINDS
from symfilt.export import check_report, findings


def test_every_analysis_finding_kind_has_words():
    assert set(findings._WORDS) == set(KINDS)


def test_every_claim_finding_kind_has_words():
    worded = set(check_report._WORDING) | set(check_report.FIXED_WORDS)
    assert worded == set(FINDING_KINDS)


def test_an_unknown_kind_is_refused_where_it_is_made():
    with pytest.raises(ValueError, match="unknown finding kind"):
        Finding("no-such-kind")


def test_a_notch_gets_its_reason_as_data_and_the_words_in_export():
    # Common practice: a notch is described by its centre frequency and Q, not a -3 dB cutoff.
    a = analyse(catalogue.build("twin-t-notch"), sensitivity=False)
    reason = a.ideal.cutoff.reason
    assert isinstance(reason, Finding)
    assert isinstance(reason.kind, str) and reason.kind in KINDS
    assert findings.describe(reason) == findings.describe(finding(reason.kind, **dict(reason.data)))
    assert findings.describe(reason) and " " in findings.describe(reason)
