"""Energy, heat and circuit arithmetic against SI definitions and the electrical code's 80 % rule."""

from numpy.testing import assert_allclose
from scipy import constants

from app.engine import electrical as el


def test_btu_factor_from_scipy_constants():
    # 1 W = 3.41214 BTU/h with Btu_IT = 1055.056 J (NIST SP 811); scipy.constants.Btu is the IT Btu.
    assert_allclose(el.BTU_H_PER_W, constants.hour / constants.Btu, rtol=1e-9)
    assert_allclose(el.heat_btu_h(1000), 3412.14, rtol=1e-5)


def test_continuous_load_rule():
    # NEC 210.19(A)(1)/210.20(A) (from memory of the text): continuous load at most 80 % of the rating.
    assert_allclose(el.continuous_limit_a(15), 12.0)
    assert_allclose(el.continuous_limit_a(20), 16.0)
    assert el.current_a(1440, 120) <= el.continuous_limit_a(15)  # 12 A exactly: at the limit
    assert el.current_a(1500, 120) > el.continuous_limit_a(15)


def test_energy_and_efficacy():
    assert_allclose(el.energy_kwh(640, 18), 11.52)
    assert_allclose(el.photon_efficacy_umol_j(1700, 640), 2.65625)
    assert_allclose(el.current_a(2300, 230), 10.0)
