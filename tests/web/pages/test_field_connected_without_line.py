"""The field page of a field whose straight line through every well was refused while the
connected tank carries its headline (tests/engine/headline/test_refused_line_compartments.py
checks the numbers): the page renders, names the basis and says why there is no p/z line."""

import pytest

from benchmarks.accuracy_cases import CASE_BY_NAME
from server.engine.analysis import analyse_field
from server.services.jobs.recompute import _estimate_from_result
from tests.factories import make_field
from tests.web.fieldbench import text_of


@pytest.fixture(scope="module")
def split_result():
    built = CASE_BY_NAME["compartments"].build(2)
    return built.inputs, analyse_field(built.inputs)


def test_field_page_names_the_connected_basis_without_a_line(db, client, split_result):
    inputs, result = split_result
    assert result.basis.model == "connected_tank" and result.pz is None
    with db.session() as s:
        f = make_field(s, name="Splitmoor")
        s.add(_estimate_from_result(f.id, result, "fp-split", inputs))
        fid = f.id
    r = client.get(f"/fields/{fid}")
    assert r.status_code == 200
    text = text_of(r.text)
    assert "no straight p/z line through every well" in text
    assert "Connected tank" in text and "too little depletion" not in text
    assert client.get(f"/api/fields/{fid}").status_code == 200
    assert client.get("/").status_code == 200
