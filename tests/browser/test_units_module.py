"""The shared units module (static/js/lib/units.js), run in the real Chromium: formatting, parsing, round trips.

Conversion factors are exact by definition: 1 in = 0.0254 m, 1 ft = 0.3048 m, 1 lb = 0.45359237 kg
(international yard and pound agreement, 1959; NIST SP 811, 2008, appendix B).
"""

import pytest
from numpy.testing import assert_allclose

pytestmark = pytest.mark.browser

M_PER_IN, M_PER_FT, KG_PER_LB = 0.0254, 0.3048, 0.45359237


@pytest.fixture(scope="module")
def units(live_server, browser):
    ctx = browser.new_context()
    page = ctx.new_page()
    page.goto(f"{live_server}/")
    page.evaluate("async () => { window.U = await import('/static/js/lib/units.js'); }")

    def call(fn, *args):
        return page.evaluate(
            "([fn, args]) => { try { return {ok: U[fn](...args)}; } catch (e) { return {error: e.message}; } }",
            [fn, list(args)],
        )

    call.page = page
    yield call
    ctx.close()


def value(result):
    assert "ok" in result, result
    return result["ok"]


@pytest.mark.parametrize(
    "text, system, metres",
    [
        ("4' 6 1/2\"", "imperial", 54.5 * M_PER_IN),
        ("4′ 6½″", "imperial", 54.5 * M_PER_IN),
        ("4 ft 6.5 in", "imperial", 54.5 * M_PER_IN),
        ("54 1/2 in", "imperial", 54.5 * M_PER_IN),
        ("4'6\"", "imperial", 54 * M_PER_IN),
        ("4' 6", "imperial", 54 * M_PER_IN),
        ("4.5 ft", "imperial", 4.5 * M_PER_FT),
        ("54", "imperial", 54 * M_PER_IN),
        ('3/8"', "imperial", 0.375 * M_PER_IN),
        ("1,370 mm", "imperial", 1.37),
        ("1,370 mm", "metric", 1.37),
        ("1,37 m", "metric", 1.37),
        ("0,125 m", "metric", 0.125),
        ("137 cm", "metric", 1.37),
        ("137", "metric", 1.37),
        ("1.37 m", "imperial", 1.37),
        ("2 m 5 cm", "metric", 2.05),
        ("−3″", "imperial", -3 * M_PER_IN),
    ],
)
def test_parse_length(units, text, system, metres):
    assert_allclose(value(units("parseLength", text, system)), metres, atol=1e-12)


@pytest.mark.parametrize("text", ["abc", "4 6", '1/0"', "", "5 mi", "6 ft ft"])
def test_parse_length_refuses_with_a_reason(units, text):
    r = units("parseLength", text, "imperial")
    assert "error" in r and ("length" in r["error"]), r


def test_every_input_length_types_back_to_the_same_value(units):
    """Every length to the eighth of an inch from 0 to 20 ft, and every millimetre from 0 to 6 m."""
    bad = units.page.evaluate("""() => {
      const out = [];
      for (let k = 0; k <= 20 * 12 * 8; k++) {
        const m = k * 0.0254 / 8, shown = U.lengthInput(m, 'imperial');
        if (Math.abs(U.parseLength(shown, 'imperial') - m) > 1e-9) out.push([m, shown]);
      }
      for (let k = 0; k <= 6000; k++) {
        const m = k / 1000, shown = U.lengthInput(m, 'metric');
        if (Math.abs(U.parseLength(shown, 'metric') - m) > 1e-9) out.push([m, shown]);
      }
      return out.slice(0, 5);
    }""")
    assert bad == []


def test_every_displayed_length_types_back_to_what_is_displayed(units):
    """A length as the plan and the tables show it (4′ 6½″, 45.5 cm) gives the same display when typed back."""
    bad = units.page.evaluate("""() => {
      const out = [];
      for (let k = 0; k <= 4000; k++) {
        const m = k * 0.00173;   // not a round number in either system
        for (const [sys, fine] of [['imperial', false], ['imperial', true], ['metric', false]]) {
          const shown = U.length(m, sys, {fine});
          const again = U.length(U.parseLength(shown, sys), sys, {fine});
          if (again !== shown) out.push([m, sys, shown, again]);
        }
      }
      return out.slice(0, 5);
    }""")
    assert bad == []


@pytest.mark.parametrize(
    "metres, system, shown",
    [
        (54.5 * M_PER_IN, "imperial", "4′ 6½″"),
        (11.5 * M_PER_IN, "imperial", "11½″"),
        (12 * M_PER_IN - 0.001, "imperial", "1′ 0″"),  # rounds up into the next foot, never 11 12/12
        (1.372, "metric", "1.372 m"),
        (0.455, "metric", "45.5 cm"),
    ],
)
def test_length_display(units, metres, system, shown):
    assert value(units("length", metres, system)) == shown


def test_input_form_is_typeable_ascii(units):
    assert value(units("lengthInput", 54.5 * M_PER_IN, "imperial")) == "4' 6 1/2\""
    assert value(units("lengthInput", 0.375 * M_PER_IN, "imperial")) == '3/8"'
    assert value(units("lengthInput", 1.37, "metric")) == "1.37 m"


def test_area_mass_temperature(units):
    # 1 ft² = 0.09290304 m² exactly; 1 lb = 0.45359237 kg exactly (NIST SP 811).
    assert value(units("area", 0.09290304 * 12.0, "imperial")) == "12.0 ft²"
    assert value(units("area", 1.23456, "metric")) == "1.23 m²"
    assert value(units("mass", 10 * KG_PER_LB, "imperial")) == "10.0 lb"
    assert value(units("weight", 4.5, "imperial")) == "9.9 lb (4.5 kg)"
    assert_allclose(value(units("parseMass", "5.5 lb", "metric")), 5.5 * KG_PER_LB, rtol=1e-12)
    assert value(units("temperature", 25, "imperial")) == "77 °F"  # °F = °C × 9/5 + 32


def test_server_messages_are_restated_in_the_chosen_units(units):
    text = "8% of Pepper pots (0.12 m²) gets less than the 20 mol m⁻² d⁻¹ that pepper needs; raise it 0.3 m."
    out = value(units("localise", text, "imperial"))
    assert "1.3 ft²" in out and "mol m⁻² d⁻¹" in out and "1′ 0″" in out and "m²" not in out.replace("m⁻²", "")
    assert value(units("localise", text, "metric")) == text
