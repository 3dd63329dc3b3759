"""results.json's layout (fem.output.results_json.dumps): indented, arrays of plain values on
one line, and the same document as json.dumps gives (only whitespace between tokens differs)."""

import json

from fem.output.results_json import dumps

TRICKY = {
    "title": "rack [phase 2], {north} bay\n\"A\"",
    "freq": [1.5, 2.25, 3.0e-12, -4.0],
    "names": ["a[1", "b]", "{c}", ", \n", ""],
    "box": [[0.0, 0.0, 0.0], [30.0, 5.0, 9.0]],
    "empty": [],
    "cases": [{"name": "X", "peaks": [1, 2, None, True]}, {"name": "Y]", "peaks": []}],
    "none": None,
}


def test_same_document_as_plain_json():
    text = dumps(TRICKY)
    assert json.loads(text) == TRICKY
    # the same tokens: only whitespace outside strings differs
    assert json.dumps(json.loads(text), separators=(",", ":")) == json.dumps(TRICKY, separators=(",", ":"))


def test_arrays_of_values_on_one_line():
    lines = dumps(TRICKY).splitlines()
    assert '  "freq": [1.5, 2.25, 3e-12, -4.0],' in lines
    assert '  "names": ["a[1", "b]", "{c}", ", \\n", ""],' in lines
    assert "    [0.0, 0.0, 0.0]," in lines and "    [30.0, 5.0, 9.0]" in lines      # a row a line
    assert '      "peaks": [1, 2, null, true]' in lines
    assert '  "empty": [],' in lines
