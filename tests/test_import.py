"""The bulk import's fast path gives exactly what the full record parser gives."""

from __future__ import annotations

from hypothesis import given
from hypothesis import strategies as st

from fieldapp.core.records import Component, as_plain, parse_record
from fieldapp.store.importer import _canonical_columns

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
    """The column check accepts a value only when the record parser gives that same value back."""
    fast = _canonical_columns({name: [value] for name, value in row.items()}, ["id-1"], set())
    record, problems = parse_record(Component, {**row, "id": "id-1", "site_id": "site-1"})
    if fast is not None:
        plain = as_plain(record)
        assert not problems
        assert {name: values[0] for name, values in fast.items()} == {k: v for k, v in plain.items() if k != "site_id"}


# --- splitting, the column-wise check and batch ids (all compared with the standard library) ---

import csv  # noqa: E402
import io  # noqa: E402
import uuid  # noqa: E402

import pytest  # noqa: E402

from fieldapp.core.fields import ValidationError  # noqa: E402
from fieldapp.store import importer  # noqa: E402
from fieldapp.store.base import new_ids  # noqa: E402
from fieldapp.store.batches import expand, find_row, problem  # noqa: E402

CELL = st.text(alphabet=st.sampled_from(list("ab ,\r\n\t\"x1-")), max_size=6)


@given(text=st.lists(CELL, max_size=12).map("".join))
def test_split_gives_what_the_standard_csv_reader_gives(text):
    """Reference: Python's csv module (RFC 4180 style reader), blank lines left out as DictReader does."""
    expected = [row for row in csv.reader(io.StringIO(text, newline="")) if row]
    assert [values for _line, values in importer.split_csv(text)] == expected
    plain = importer._plain_columns(text)
    if plain is not None:
        header, columns = plain
        assert expected[0] == header
        assert [list(r) for r in zip(*columns.values(), strict=True)] == expected[1:]


ROW = st.fixed_dictionaries(VALUES)


@given(rows=st.lists(ROW, min_size=1, max_size=8), quote=st.booleans())
def test_column_check_agrees_with_row_by_row_parsing(rows, quote):
    """The column-wise fast path accepts a file only when the row-by-row parser gives the same rows."""
    out = io.StringIO()
    writer = csv.writer(out, quoting=csv.QUOTE_ALL if quote else csv.QUOTE_MINIMAL)
    writer.writerow(list(VALUES))
    writer.writerows([list(r.values()) for r in rows])
    text = out.getvalue()
    body = importer.split_csv(text)[1:]
    ids = new_ids(len(body))
    columns = {name: [values[i] for _l, values in body] for i, name in enumerate(VALUES)} \
        if all(len(v) == len(VALUES) for _l, v in body) else None
    fast = importer._canonical_columns(columns, ids, set()) if columns and len(body) == len(rows) else None
    try:
        slow = importer._row_by_row(list(VALUES), body, ids, "site-1", set())
    except ValidationError:
        slow = None
    if fast is not None:
        assert fast == slow


def test_quoted_values_and_line_numbers_follow_the_physical_lines(store, site, tmp_path):
    path = tmp_path / "c.csv"
    path.write_text('tag,type,service,area\n"V-1",valve,gas,"north,\nyard"\n\nV-2,teapot,gas,east\n')
    with pytest.raises(ValidationError) as err:
        importer.import_components(store, path, site.id)
    assert [(p.field, p.line) for p in err.value.problems] == [("type", 5)]
    path.write_text('tag,type,service,area\n"V-1",valve,gas,"north, yard"\nV-2,flange,gas,east\n')
    assert importer.import_components(store, path, site.id) == 2
    assert store.rows("SELECT area FROM components WHERE tag = 'V-1'")[0]["area"] == "north, yard"


@pytest.mark.parametrize("count", [1, 2, 4095, 4097, 10_000])
def test_batch_ids_are_consecutive_version_7_uuids(count):
    """Reference: RFC 9562 §5.7 layout and §6.2 method 2 (monotonic counter), read with Python's uuid module."""
    ids = new_ids(count)
    parsed = [uuid.UUID(i) for i in ids]
    assert all(u.version == 7 and u.variant == uuid.RFC_4122 and str(u) == i for u, i in zip(parsed, ids, strict=True))
    assert all(b.int == a.int + 1 for a, b in zip(parsed, parsed[1:], strict=False))
    assert ids == sorted(ids) and len({i[:13] for i in ids}) == 1
    assert abs(int(ids[0][:8] + ids[0][9:13], 16) / 1000 - __import__("time").time()) < 5


def test_malformed_batch_entries_are_named():
    ids = new_ids(3)
    good = {"tbl": "components", "row_id": ids[0], "old": None,
            "new": {"columns": {"id": ids, "tag": ["a", "b", "c"]}, "same": {"site_id": "s", "deleted": 0}}}
    assert problem(good) is None
    assert [e["new"]["tag"] for e in expand(good)] == ["a", "b", "c"]
    assert find_row(good["new"], ids[1]) == {"id": ids[1], "tag": "b", "site_id": "s", "deleted": 0}
    assert find_row(good["new"], ids[1] + "0") is None
    other_millisecond = "ffffffff-ffff" + ids[1][13:]
    bad = [{**good, "tbl": "leaks"}, {**good, "row_id": ids[1]},
           {**good, "new": {**good["new"], "columns": {"id": ids[::-1], "tag": ["a", "b", "c"]}}},
           {**good, "new": {**good["new"], "columns": {"id": ids, "tag": ["a"]}}},
           {**good, "new": {"columns": good["new"]["columns"]}},
           {**good, "new": {**good["new"], "columns": {"id": [ids[0], other_millisecond], "tag": ["a", "b"]}}}]
    for entry in bad:
        assert problem(entry), entry
