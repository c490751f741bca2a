"""IES LM-63 and EULUMDAT import: the zonal method on files whose flux is known exactly; malformed files refused."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine.compute import compute_scene
from app.engine.distributions import lambertian
from app.engine.scene import Emitter, Enclosure, Grid
from app.room.models import FixtureType
from app.service.photometry import MAX_FILE_BYTES, PhotometryError, fixture_type_from, parse_ies, parse_ldt
from app.service.scene_builder import emitter_for

I0 = 1000.0  # candela at nadir of a Lambertian luminaire: its flux is exactly π·I0 (Lambert)


def ies_text(
    header="IESNA:LM-63-2002", horizontal=(0.0,), vertical=None, ptype=1, tilt="NONE", lumens=None, table=None, extra=""
):
    v = np.arange(0, 91, 2.5) if vertical is None else np.asarray(vertical)
    h = list(horizontal)
    cd = table if table is not None else [[I0 * np.cos(np.radians(a)) for a in v] for _ in h]
    lm = np.pi * I0 if lumens is None else lumens
    lines = [header] if header else []
    lines += ["[TEST] synthetic Lambertian", "[MANUFAC] none", "[LUMINAIRE] Test panel"]
    lines.append(f"TILT={tilt}")
    if tilt == "INCLUDE":
        lines += ["1", "3", "0 45 90", "1.0 0.95 0.9"]
    lines.append(f"1 {lm:.6f} 1 {len(v)} {len(h)} {ptype} 2 0.6 0.6 0.05")
    lines.append("1.0 1.0 210")
    lines.append(" ".join(f"{a:g}" for a in v))
    lines.append(" ".join(f"{a:g}" for a in h))
    for row in cd:
        # Long rows wrap across lines, as real files do.
        vals = [f"{c:.4f}" for c in row]
        for k in range(0, len(vals), 10):
            lines.append(" ".join(vals[k : k + 10]))
    return "\n".join(lines) + extra + "\n"


@pytest.mark.parametrize("header", ["", "IESNA:LM-63-1995", "IESNA:LM-63-2002", "IES:LM-63-2019"])
def test_zonal_flux_of_a_synthetic_lambertian_file(header):
    ph = parse_ies(ies_text(header))
    # Zonal method: Φ = Σ Ī_zone 2π (cos θ₁ − cos θ₂) against the exact π·I0 (2.5° zones).
    assert_allclose(ph.zonal_flux, np.pi * I0, rtol=5e-4)
    assert_allclose(ph.declared_flux, np.pi * I0, rtol=1e-6)
    assert (ph.width_m, ph.length_m) == (0.6, 0.6)


@pytest.mark.parametrize(
    "horizontal", [(0.0,), (0, 45, 90), (0, 45, 90, 135, 180), (90, 135, 180, 225, 270), tuple(range(0, 361, 45))]
)
def test_horizontal_symmetries_expand_to_the_full_circle(horizontal):
    ph = parse_ies(ies_text(horizontal=horizontal))
    assert_allclose(ph.zonal_flux, np.pi * I0, rtol=5e-4)
    if len(horizontal) > 1:
        assert ph.azimuth_deg[0] == 0 and max(ph.azimuth_deg) < 360 and len(ph.azimuth_deg) >= 8


def test_quadrant_symmetry_mirrors_the_values():
    v = [0, 30, 60, 90]
    table = [[100, 80, 40, 0], [200, 160, 80, 0], [300, 240, 120, 0]]  # at 0, 45, 90
    ph = parse_ies(ies_text(horizontal=(0, 45, 90), vertical=v, table=table))
    rows = dict(zip(ph.azimuth_deg, ph.candela, strict=True))
    assert rows[135.0] == rows[45.0] and rows[180.0] == rows[0.0] and rows[270.0] == rows[90.0]
    assert rows[315.0] == rows[45.0]


def test_tilt_included_is_read():
    ph = parse_ies(ies_text(tilt="INCLUDE"))
    assert any("tilt data included" in n for n in ph.notes)
    assert_allclose(ph.zonal_flux, np.pi * I0, rtol=5e-4)


@pytest.mark.parametrize("ptype, letter", [(2, "B"), (3, "A")])
def test_type_a_and_b_refused(ptype, letter):
    with pytest.raises(PhotometryError, match=f"type {letter} is not supported") as exc:
        parse_ies(ies_text(ptype=ptype))
    assert exc.value.line is not None


def test_truncated_table_names_the_line():
    text = ies_text()
    cut = "\n".join(text.splitlines()[:-2])
    with pytest.raises(PhotometryError, match="truncated") as exc:
        parse_ies(cut)
    assert exc.value.line == len(cut.splitlines())


def test_non_numeric_value_names_line_and_reason():
    lines = ies_text().splitlines()
    lines[-1] = lines[-1].replace(lines[-1].split()[2], "twelve")
    with pytest.raises(PhotometryError, match="'twelve' is not a number") as exc:
        parse_ies("\n".join(lines))
    assert exc.value.line == len(lines)


def test_wrong_counts_refused():
    with pytest.raises(PhotometryError, match="after the candela table"):
        parse_ies(ies_text(extra="\n1 2 3"))
    bad = ies_text().replace("1 3141.592654 1 37 1 1 2", "1 3141.592654 1 0 1 1 2")
    with pytest.raises(PhotometryError, match="number of vertical angles"):
        parse_ies(bad)


def test_not_ies_and_external_tilt_refused():
    with pytest.raises(PhotometryError, match="not an IES"):
        parse_ies("hello\nworld\n")
    with pytest.raises(PhotometryError, match="separate tilt file"):
        parse_ies(ies_text(tilt="lamp.tlt"))


def test_huge_file_refused_by_size():
    with pytest.raises(PhotometryError, match="larger than"):
        parse_ies("x" * (MAX_FILE_BYTES + 1))


def ldt_text(isym=1, lamp_flux=2000.0, gammas=None, planes=None, lamps=1, profile=None):
    g = np.arange(0, 181, 5.0) if gammas is None else np.asarray(gammas)
    mc = 24
    c = np.arange(0, 360, 15.0)
    # cd per 1000 lm of lamp flux: a Lambertian emitter of 1000 lm has I0 = 1000/π.
    if profile is None:
        profile = [1000 / np.pi * max(np.cos(np.radians(a)), 0) for a in g]
    nplanes = {0: mc, 1: 1, 2: mc // 2 + 1, 3: mc // 2 + 1, 4: mc // 4 + 1}[isym]
    lines = [
        "Generic maker",
        "1",
        str(isym),
        str(mc),
        "15",
        str(len(g)),
        "5",
        "report 1",
        "Test panel",
        "TP-1",
        "test.ldt",
        "2026-12-01",
        "600",
        "600",
        "50",
        "600",
        "600",
        "0",
        "0",
        "0",
        "0",
        "100",
        "100",
        "1.0",
        "0",
        "1",
        "1",
        "LED",
        f"{lamp_flux:g}",
        "4000",
        "80",
        "210",
    ]
    lines[26] = str(lamps)  # line 27: number of lamps in the (one) lamp set
    lines += ["0.5"] * 10
    lines += [f"{a:g}" for a in c]
    lines += [f"{a:g}" for a in g]
    for _ in range(planes if planes is not None else nplanes):
        lines += [f"{x:.5f}" for x in profile]
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("isym", [0, 1, 2, 3, 4])
def test_eulumdat_lambertian_flux(isym):
    ph = parse_ldt(ldt_text(isym))
    assert_allclose(ph.zonal_flux, 2000.0, rtol=2e-3)  # Lambertian: Φ = π I0, I0 = 2 klm × 1000/π cd/klm
    assert ph.declared_flux == 2000.0
    assert (ph.width_m, ph.length_m) == (0.6, 0.6)


def test_eulumdat_lamp_set_flux_is_the_sets_total():
    """A set of 2 lamps declaring 2,000 lm in all is 2,000 lm, not 4,000 (EULUMDAT: the set's total flux;
    format description, from memory)."""
    ph = parse_ldt(ldt_text(1, lamps=2))
    assert ph.declared_flux == 2000.0
    assert_allclose(ph.zonal_flux, 2000.0, rtol=2e-3)


def test_eulumdat_negative_intensity_refused_with_its_line():
    g = np.arange(0, 181, 5.0)
    profile = [1000 / np.pi * max(np.cos(np.radians(a)), 0) for a in g]
    profile[3] = -5.0
    text = ldt_text(1, profile=profile)
    with pytest.raises(PhotometryError, match="negative intensity") as err:
        parse_ldt(text)
    bad = next(i for i, ln in enumerate(text.splitlines(), 1) if ln.strip() == "-5.00000")
    assert err.value.line == bad


def test_eulumdat_wrong_counts_refused():
    with pytest.raises(PhotometryError, match="after the intensity table"):
        parse_ldt(ldt_text(1, planes=2))
    with pytest.raises(PhotometryError, match="ends early"):
        parse_ldt("\n".join(ldt_text(1).splitlines()[:-5]))


def test_imported_file_lights_the_canopy_like_the_lambertian_it_describes():
    ph = parse_ies(ies_text(vertical=np.arange(0, 91, 1.0)))
    ftype, report = fixture_type_from(ph, type_id="imp", name="Imported", power_w=None, flux_unit="photon")
    t = FixtureType.model_validate(ftype)
    assert report["upward_share"] == pytest.approx(0.0, abs=1e-9)
    assert_allclose(t.ppf_umol_s, np.pi * I0, rtol=1e-3)
    t = t.model_copy(update={"geometry": t.geometry.model_copy(update={"kind": "point", "length_m": 0, "width_m": 0})})
    imported = emitter_for("F1", t, 0.0, 0.0, 1.0, 0.0, 100.0)
    reference = Emitter("R", 0.0, 0.0, 1.0, t.ppf_umol_s, lambertian())
    g = Grid("g", -1, -1, 2, 2, 0.0, 0.1)
    enc = Enclosure(10, 10, 3)
    a, b = (compute_scene((e,), (g,), enc)[0].ppfd for e in (imported, reference))
    assert_allclose(a, b, rtol=0.01)


def test_lumens_need_a_factor():
    ph = parse_ies(ies_text())
    with pytest.raises(PhotometryError, match="µmol-per-lumen"):
        fixture_type_from(ph, type_id="x", name="x", power_w=100, flux_unit="lumen")
    ftype, report = fixture_type_from(ph, type_id="x", name="x", power_w=100, umol_per_lumen=0.0135)
    assert_allclose(ftype["ppf_umol_s"], np.pi * I0 * 0.0135, rtol=1e-3)


def test_api_import_fit_and_spectrum(client):
    r = client.post(
        "/api/photometry/import",
        params={"kind": "ies", "flux_unit": "photon", "name": "Test panel"},
        content=ies_text().encode(),
        headers={"Content-Type": "application/octet-stream"},
    )
    assert r.status_code == 200, r.text
    assert r.json()["fixture_type"]["beam"]["kind"] == "tabulated"
    # 3142 µmol/s from 210 W is 15 µmol/J: above the Planck-relation ceiling, and said so.
    assert r.json()["report"]["findings"][0]["code"] == "above_photon_ceiling"
    bad = client.post(
        "/api/photometry/import",
        params={"kind": "ies", "flux_unit": "photon"},
        content=ies_text(ptype=3).encode(),
        headers={"Content-Type": "application/octet-stream"},
    )
    assert bad.status_code == 422 and "type A" in bad.json()["message"] and "line" in bad.json()["message"]
    readings = [[100.0 + 10 * min(i, 4 - i, j, 4 - j) for i in range(5)] for j in range(5)]
    f = client.post(
        "/api/photometry/fit",
        json={"readings": readings, "cell_m": 0.15, "hanging_height_m": 0.45, "claimed_ppf_umol_s": 20, "power_w": 10},
    )
    assert f.status_code == 200
    levels = {x["code"]: x["level"] for x in f.json()["findings"]}
    assert levels["more_photons_than_emitted"] == "impossible"
    s = client.post("/api/photometry/spectrum", json={"peaks": [{"nm": 660, "fwhm_nm": 20, "weight": 1}]})
    assert s.status_code == 200 and s.json()["red_600_700"] > 0.99
    assert client.post("/api/photometry/spectrum", json={}).status_code == 422
    assert client.get("/fixtures/new").status_code == 200


def _line_holding(lines, token, start=0):
    """1-based number of the first line at or after start whose values include token."""
    return next(i + 1 for i, line in enumerate(lines) if i >= start and token in line.split())


def test_negative_candela_names_its_own_line():
    v = np.arange(0, 91, 2.5)
    table = [[I0 * np.cos(np.radians(a)) for a in v]]
    table[0][25] = -7.0  # the 26th value: on the third wrapped line of the row, not where the table starts
    lines = ies_text(table=table).splitlines()
    with pytest.raises(
        PhotometryError, match=r"negative candela value -7 \(horizontal angle 0, vertical angle 62.5\)"
    ) as exc:
        parse_ies("\n".join(lines))
    assert exc.value.line == _line_holding(lines, "-7.0000")


def test_descending_angles_name_their_own_line():
    # Vertical angles: 5 before 2.5 on the vertical-angle line.
    lines = ies_text(horizontal=(0, 45, 90)).splitlines()
    v_line = _line_holding(lines, "87.5")
    lines[v_line - 1] = lines[v_line - 1].replace("0 2.5 5 ", "0 5 2.5 ", 1)
    with pytest.raises(PhotometryError, match=r"vertical angles must rise.*angle 3 is 2.5") as exc:
        parse_ies("\n".join(lines))
    assert exc.value.line == v_line
    # Horizontal angles on a line of their own, after the vertical ones: the error points there.
    lines = ies_text(horizontal=(0, 45, 90)).splitlines()
    h_line = lines.index("0 45 90") + 1
    lines[h_line - 1] = "0 90 45"
    with pytest.raises(PhotometryError, match=r"horizontal angles must rise \(angle 3 is 45 after 90\)") as exc:
        parse_ies("\n".join(lines))
    assert exc.value.line == h_line
    # Vertical angles split over two lines: the fault on the second is reported there.
    lines = ies_text().splitlines()
    v_line = _line_holding(lines, "87.5")
    vals = lines[v_line - 1].split()
    vals[30] = "10"  # 75 -> 10, on the continuation line
    split = lines[: v_line - 1] + [" ".join(vals[:20]), " ".join(vals[20:])] + lines[v_line:]
    with pytest.raises(PhotometryError, match=r"angle 31 is 10") as exc:
        parse_ies("\n".join(split))
    assert exc.value.line == v_line + 1


@pytest.mark.parametrize("height", [0.4, 0.8])
def test_an_opening_wide_rather_than_long_keeps_its_axes(height):
    """LM-63: the opening's length lies along the C0-C180 axis, its width along C90-C270 (IES LM-63-2002,
    luminous opening dimensions; from memory). A 0.2 m long, 1.0 m wide opening with an asymmetric table,
    I(θ, φ) = I0 cos²θ (1 + 0.6 sin²θ cos 2φ), whose downward flux is 2π I0 / 3 exactly (the cos 2φ term
    integrates to zero), is checked against inverse-square sums over the opening laid out as the file says.
    The sin²θ factor keeps the intensity single-valued at nadir, as a real distribution is (an earlier version
    of this test without it asked for a different intensity at θ = 0 for every azimuth, which no
    quadrature can reproduce)."""
    v = np.arange(0, 91, 2.5)
    h = np.arange(0, 91, 7.5)  # quadrant symmetry
    table = [
        [
            I0 * np.cos(np.radians(a)) ** 2 * (1 + 0.6 * np.sin(np.radians(a)) ** 2 * np.cos(2 * np.radians(p)))
            for a in v
        ]
        for p in h
    ]
    text = ies_text(horizontal=h, table=table, lumens=2 * np.pi * I0 / 3).replace(" 2 0.6 0.6 0.05", " 2 1.0 0.2 0.05")
    ph = parse_ies(text)
    assert (ph.width_m, ph.length_m) == (1.0, 0.2)
    ftype, _ = fixture_type_from(ph, type_id="wide", name="Wide", power_w=100.0, flux_unit="photon")
    assert (ftype["geometry"]["length_m"], ftype["geometry"]["width_m"]) == (0.2, 1.0)
    t = FixtureType.model_validate(ftype)
    e = emitter_for("F1", t, 10.0, 10.0, height, 0.0, 100.0)
    g = Grid("g", 9.0, 9.0, 2.0, 2.0, 0.0, 0.1)
    got = compute_scene((e,), (g,), Enclosure(20, 20, 3))[0].ppfd
    # Reference: the opening cut into 2 cm x 2 cm elements, each a point source of the formula's
    # distribution carrying its share of the flux (inverse-square law, E = I cos θ / r²).
    xs = (np.arange(10) + 0.5) * 0.02 - 0.1  # length 0.2 m along x (C0)
    ys = (np.arange(50) + 0.5) * 0.02 - 0.5  # width 1.0 m along y (C90)
    gx, gy = np.meshgrid(g.x0_m + np.arange(g.nx) * g.spacing_m, g.y0_m + np.arange(g.ny) * g.spacing_m)
    ppf = t.ppf_umol_s
    ref, flipped = np.zeros_like(gx), np.zeros_like(gx)
    for ex in xs:
        for ey in ys:
            dx, dy = gx - 10.0 - ex, gy - 10.0 - ey
            r2 = dx**2 + dy**2 + height**2
            cos_t = height / np.sqrt(r2)
            lean = 0.6 * (1 - cos_t**2) * np.cos(2 * np.arctan2(dy, dx))
            share = ppf / (xs.size * ys.size) * cos_t**2 / (2 * np.pi / 3) * cos_t / r2
            ref += share * (1 + lean)
            flipped += share * (1 - lean)  # the table read 90 deg off in azimuth (C0 taken as C90)
    assert_allclose(got, ref, rtol=0.01, atol=0.002 * ref.max())
    assert np.abs(got - flipped).max() > 0.1 * ref.max()
    # The same opening turned 90 deg (longer side along C0, as before) is far off the reference.
    turned = t.model_copy(update={"geometry": t.geometry.model_copy(update={"length_m": 1.0, "width_m": 0.2})})
    wrong = compute_scene((emitter_for("F2", turned, 10.0, 10.0, height, 0.0, 100.0),), (g,), Enclosure(20, 20, 3))
    assert np.abs(wrong[0].ppfd - ref).max() > 0.15 * ref.max()


def test_isotropic_file_sends_half_its_flux_down():
    """An isotropic file (I0 in every direction, 0-180°): Φ = 4π I0, half of it below the horizon, and the PPFD
    under it is I0/d² (inverse-square law), not twice that: the table is kept whole and the PPF is its whole flux."""
    v = np.arange(0, 181, 5.0)
    ph = parse_ies(ies_text(vertical=v, table=[[I0] * v.size], lumens=4 * np.pi * I0))
    ftype, report = fixture_type_from(ph, type_id="iso", name="Isotropic", power_w=None, flux_unit="photon")
    assert report["downward_share"] == pytest.approx(0.5, rel=1e-6)
    assert report["upward_share"] == pytest.approx(0.5, rel=1e-6)
    assert_allclose(ftype["ppf_umol_s"], 4 * np.pi * I0, rtol=1e-6)
    t = FixtureType.model_validate(ftype)
    t = t.model_copy(update={"geometry": t.geometry.model_copy(update={"kind": "point", "length_m": 0, "width_m": 0})})
    g = Grid("g", -1, -1, 2, 2, 0.0, 0.25)
    ppfd = compute_scene((emitter_for("F1", t, 0.0, 0.0, 1.5, 0.0, 100.0),), (g,), Enclosure(10, 10, 3))[0].ppfd
    gx, gy = np.meshgrid(g.x_m, g.y_m)
    d2 = gx**2 + gy**2 + 1.5**2
    assert_allclose(ppfd, I0 * 1.5 / d2**1.5, rtol=2e-3)


def test_declared_flux_that_disagrees_with_the_table_is_said(client):
    """The zonal integral of a Lambertian table is π·I0 (Lambert); a file declaring twice that is flagged, one
    declaring it within the rounding of its table is not."""
    params = {"kind": "ies", "flux_unit": "photon", "power_w": 2000}
    head = {"Content-Type": "application/octet-stream"}

    def codes(lumens):
        r = client.post("/api/photometry/import", params=params, content=ies_text(lumens=lumens).encode(), headers=head)
        assert r.status_code == 200, r.text
        return {f["code"]: f for f in r.json()["report"]["findings"]}

    doubled = codes(2 * np.pi * I0)
    assert "declared_flux_disagrees" in doubled and "50%" in doubled["declared_flux_disagrees"]["message"]
    assert "declared_flux_disagrees" not in codes(np.pi * I0 * 1.01)
