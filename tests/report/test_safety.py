"""Breakdown warnings: thresholds from the table of typical strengths."""

from dipolearray.report import TYPICAL_BREAKDOWN_KV_PER_MM, breakdown_notes


def test_no_warning_below_the_lowest_strength():
    low = min(TYPICAL_BREAKDOWN_KV_PER_MM.values())
    assert breakdown_notes(0.9 * low * 1e6, 0.99 * low * 1e6) == []
    assert breakdown_notes(None, None) == []


def test_warning_names_exactly_the_hosts_exceeded():
    notes = breakdown_notes(1e6, 12e6)  # 1 kV/mm applied, 12 kV/mm peak
    assert len(notes) == 1 and "peak local host field (12 kV/mm)" in notes[0]
    exceeded = [k for k, v in TYPICAL_BREAKDOWN_KV_PER_MM.items() if v < 12]
    kept = [k for k, v in TYPICAL_BREAKDOWN_KV_PER_MM.items() if v >= 12]
    assert exceeded and kept
    assert all(k in notes[0] for k in exceeded) and not any(k in notes[0] for k in kept)
    both = breakdown_notes(25e6, 80e6)
    assert len(both) == 2 and "applied field (25 kV/mm)" in both[0]
