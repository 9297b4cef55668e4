"""The fluid page's z against an independent reference: CoolProp's multiparameter equation of
state for the lean gas of docs/domain-reference.md §1.9 (GERG-2008-type mixing; check value 14:
DAK + Sutton + Wichert-Aziz within 2 % of the EOS at each point)."""

from __future__ import annotations

import pytest

CP = pytest.importorskip("CoolProp.CoolProp")

from server.db.models import Fluid  # noqa: E402
from tests.factories import make_field  # noqa: E402

LEAN = "Methane[0.90]&Ethane[0.06]&Propane[0.02]&Nitrogen[0.01]&CarbonDioxide[0.01]"
T_K = 360.0
PA_PER_PSI = 6894.757293168361  # NIST SP 811
AIR_MOLAR_MASS_G_PER_MOL = 28.9647  # the gravity correlations' air (domain reference §1.4)


def test_fluid_twin_z_is_within_two_percent_of_the_equation_of_state(db, client):
    state = CP.AbstractState("HEOS", "Methane&Ethane&Propane&Nitrogen&CarbonDioxide")
    state.set_mole_fractions([0.90, 0.06, 0.02, 0.01, 0.01])
    gravity = state.molar_mass() * 1e3 / AIR_MOLAR_MASS_G_PER_MOL  # about 0.616
    with db.session() as s:
        f = make_field(s, name="Lean", t_degF=T_K * 1.8 - 459.67, gravity=gravity, pi_psia=6000.0)
        fluid = s.query(Fluid).filter_by(field_id=f.id).one()
        fluid.y_co2_frac, fluid.y_n2_frac = 0.01, 0.01
        fid = f.id
    curve = client.get(f"/api/fields/{fid}/fluid").json()["curve"]
    for p_psia in (1500.0, 3000.0, 4500.0, 6000.0):
        ours = curve["z_correlation"][curve["pressure_psia"].index(p_psia)]
        reference = CP.PropsSI("Z", "T", T_K, "P", p_psia * PA_PER_PSI, "HEOS::" + LEAN)
        assert ours == pytest.approx(reference, rel=0.02), p_psia
