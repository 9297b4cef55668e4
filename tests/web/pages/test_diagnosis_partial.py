"""The diagnosis partial and its chart builders, fed with a real engine diagnosis as stored
(JSON): flags with reasons, the ranked model table, wells, and the figures' traces."""

import json
import re

from server.engine.diagnosis.diagnose import diagnose_field
from server.engine.prepare.points import prepare
from server.services.serialize import to_jsonable
from server.web.charts.pz import cole_figure, model_fits_figure
from server.web.display import DisplayUnits
from server.web.templating import make_templates
from tests.engine.cases import demo_field_inputs


def _stored(name):
    inputs = demo_field_inputs(name)
    return json.loads(json.dumps(to_jsonable(diagnose_field(inputs, prepare(inputs)))))


def _render(dg, cole=None):
    env = make_templates().env
    fig = model_fits_figure(dg) if dg else None
    return env.get_template("_diagnosis.html").render(
        dg=dg, model_fits_figure=fig, cole_figure=cole, du=DisplayUnits("oilfield")
    )


def test_compartmented_field_shows_its_flag_ranked_models_and_wells():
    dg = _stored("Gorsewick")
    html = _render(dg)
    flag = re.search(r'<li class="flag flag-alert" data-code="compartment_signature">(.*?)</li>', html, re.S)
    assert flag and "GRW-3" in flag.group(1) and "near the initial p/z" in flag.group(1)
    rows = re.findall(r'<tr data-model="([a-z_]+)">', html)
    assert rows[:2] == ["two_tank", "single_tank"] and len(rows) == 6  # ranked by AICc
    assert "little support" in html and "Best fit: Two tanks" in html
    assert re.search(r'<tr data-well="GRW-3">.*?disagrees, reads near initial', html, re.S)
    fig = model_fits_figure(dg)
    names = [t["name"] for t in fig["data"]]
    assert names[0] == "surveys used by every model" and names[1].startswith("Two tanks")
    assert names[1].endswith("(East)") and names[2].endswith("(West)")  # one line per compartment
    assert fig["data"][1]["x"] == sorted(fig["data"][1]["x"])  # drawn along Gp


def test_clean_field_says_no_flags_and_escapes_text():
    dg = _stored("Amberlode")
    html = _render(dg)
    assert 'id="flags">No flags' in html
    dg["flags"] = [
        {"code": "x", "severity": "info", "title": "<b>t</b>", "reason": "<script>", "numbers": {}}
    ]
    html = _render(dg)
    assert "<script>" not in html.split('id="flags"')[1].split("</ul>")[0] and "&lt;script&gt;" in html


def test_no_diagnosis_is_said_plainly():
    assert "No diagnosis for this estimate" in _render(None)


def test_cole_figure_draws_points_used_and_the_trend():
    plot = {
        "modified": False,
        "gp_bscf": [1.0, 2.0, 3.0, 4.0],
        "ratio_bscf": [None, 101.0, 104.0, 107.0],
        "used": [False, False, True, True],
        "trend": {"slope": 3.0, "intercept_bscf": 95.0, "direction": "rising", "p_value": 0.001},
    }
    fig = cole_figure([plot])
    names = [t["name"] for t in fig["data"]]
    assert names == ["F/Eg", "F/Eg, not used for the trend", "F/Eg trend: rising (p = 0.001)"]
    assert fig["data"][0]["x"] == [3.0, 4.0] and fig["data"][1]["x"] == [2.0]
    assert fig["data"][2]["y"] == [104.0, 107.0]
