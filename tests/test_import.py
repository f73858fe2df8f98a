"""The bulk import's fast path gives exactly what the full record parser gives."""

from __future__ import annotations

from hypothesis import given
from hypothesis import strategies as st

from fieldapp.core.records import Component, as_plain, parse_record
from fieldapp.store.importer import _canonical

VALUES = {
    "tag": st.one_of(st.text(max_size=90), st.sampled_from(["V-1", " V-2", "V-3 "])),
    "type": st.sampled_from(["valve", "Valve", "open-ended line", "teapot", "", "flange"]),
    "service": st.sampled_from(["gas", "GAS", "light liquid", "steam", ""]),
    "area": st.text(max_size=130),
    "equipment": st.text(max_size=20),
    "difficult_to_monitor": st.sampled_from(["", "yes", "no", "Y", "TRUE", "maybe", "1"]),
    "unsafe_to_monitor": st.sampled_from(["", "no", "0", "false"]),
}


@given(row=st.fixed_dictionaries(VALUES))
def test_fast_path_agrees_with_parse_record(row):
    fast = _canonical(row, "id-1", "site-1")
    record, problems = parse_record(Component, {**row, "id": "id-1", "site_id": "site-1"})
    if fast is not None:
        assert not problems and as_plain(record) == fast
