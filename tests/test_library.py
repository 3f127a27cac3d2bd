"""The surfactant library: shipped entries, saving and reusing a case's surfactant or blend.

Outside references:

* molar masses from the formulas with the IUPAC standard atomic weights (abridged, 2021:
  C 12.011, H 1.008, O 15.999, Na 22.990, S 32.06); tolerance 0.01 g/mol;
* the surface pressure at the CMC of each micelle-forming entry against water's tension at 25 degC
  (71.97 mN/m, IAPWS R1-76(2014)) minus the tension at the CMC the entry cites ([from memory]
  values, stated in the entry); tolerance 0.3 mN/m (K is rounded to two or three figures);
* the library file is the same file the case reader's ``[surfactant] from`` takes: a case that
  names it solves exactly like the case with the values typed in.
"""

from __future__ import annotations

import shutil
import tomllib
from pathlib import Path

import pytest

from sizing import library
from sizing.case import load_case, parse_case
from sizing.errors import InputError
from sizing.physics.isotherm import pressure_of_theta, theta_of_c
from sizing.units import parse
from sizing.views import summary

ROOT = Path(__file__).resolve().parents[1]
DEMOS = ROOT / "cases_demo"
BUILTIN = sorted(library.BUILTIN.glob("*.toml"))
ATOMIC = {"C": 12.011, "H": 1.008, "O": 15.999, "Na": 22.990, "S": 32.06}
FORMULAS = {"sodium_dodecyl_sulfate": {"C": 12, "H": 25, "Na": 1, "O": 4, "S": 1},
            "c12_ethoxylate_c12e6": {"C": 24, "H": 50, "O": 7}}
WATER_25C = 71.97e-3  # N/m, IAPWS R1-76(2014)


def _demo(name: str) -> dict:
    return tomllib.loads((DEMOS / name).read_text(encoding="utf-8"))


def test_at_least_four_shipped_entries_each_cited_typical_and_at_a_temperature():
    assert len(BUILTIN) >= 4
    for path in BUILTIN:
        text = path.read_text(encoding="utf-8")
        entry = library.read_entry(path, builtin=True)
        assert entry.problem is None, entry.problem
        assert "typical values, not a product's data" in text.lower()
        assert "typical values, not a product's data" in entry.provenance["kind"]
        assert entry.typical
        assert entry.provenance.get("source"), path.name
        assert parse(entry.provenance["temperature"], "temperature", "temperature") > 0
        assert entry.block.get("reference_temperature") == entry.provenance["temperature"]
        # every value recalled is marked so
        assert "[from memory]" in text


@pytest.mark.parametrize("stem", sorted(FORMULAS))
def test_molar_mass_matches_the_formula(stem):
    entry = library.read_entry(library.BUILTIN / f"{stem}.toml")
    expected = sum(ATOMIC[el] * n for el, n in FORMULAS[stem].items())
    assert parse(entry.block["molar_mass"], "molar_mass", "molar_mass") * 1e3 == pytest.approx(expected, abs=0.01)


@pytest.mark.parametrize("path", [p for p in BUILTIN if "cmc" in tomllib.loads(p.read_text())["surfactant"]],
                         ids=lambda p: p.stem)
def test_pressure_at_the_cmc_matches_the_cited_tension(path):
    entry = library.read_entry(path)
    b = entry.block
    T = parse(entry.provenance["temperature"], "t", "temperature")
    cmc = parse(b["cmc"], "cmc", "concentration")
    K = parse(b["adsorption_constant"], "K", "adsorption_constant")
    if "max_surface_excess" in b:
        gi = parse(b["max_surface_excess"], "g", "surface_excess")
    else:
        gi = 1.0 / (6.02214076e23 * parse(b["area_per_molecule"], "a", "area"))
    pi = float(pressure_of_theta(theta_of_c(cmc, K), gi, T, b["gibbs_prefactor"]))
    gamma_cmc = parse(entry.provenance["tension_at_cmc"], "t", "tension")
    assert pi == pytest.approx(WATER_25C - gamma_cmc, abs=0.3e-3)


@pytest.mark.parametrize("path", BUILTIN, ids=lambda p: p.stem)
def test_each_shipped_entry_works_through_from_like_typed_values(path, tmp_path):
    data = _demo("lotion_o_w.toml")
    shutil.copy(path, tmp_path / path.name)
    typed = library.use(data, library.read_entry(path))
    by_ref = {**data, "surfactant": {"from": path.name}}
    a = summary(parse_case(typed, tmp_path))
    b = summary(parse_case(by_ref, tmp_path))
    assert a["dose"] == b["dose"]


def test_save_list_and_reuse_a_fitted_surfactant(tmp_path):
    data = _demo("agro_ew_fitted.toml")
    doc = library.entry_of_case(data, DEMOS, "NE-6 from the lab (fit 12)", notes="our fit")
    assert "from" not in doc["surfactant"]  # the fitted block's keys are merged in: it stands alone
    assert doc["surfactant"]["cmc"] == "0.0863153 mM"
    assert doc["provenance"]["kind"] == "tension series fit"
    folder = tmp_path / "lib"
    path = library.save(folder, doc)
    assert path == (folder / "ne-6_from_the_lab_fit_12.toml").resolve()
    with pytest.raises(InputError, match="exists already"):
        library.save(folder, doc)
    library.save(folder, doc, overwrite=True)
    found = [e for e in library.entries(folder) if not e.builtin]
    assert [e.name for e in found] == ["NE-6 from the lab (fit 12)"]
    # reused in another case, it gives the dose of the original case
    other = library.use(data, found[0])
    assert summary(parse_case(other, DEMOS))["dose"] == summary(load_case(DEMOS / "agro_ew_fitted.toml"))["dose"]
    # and the same file is what a case's `from` reads on the command line
    case_dir = tmp_path / "case"
    case_dir.mkdir()
    shutil.copy(path, case_dir / "ne6.toml")
    ref = {**data, "surfactant": {"from": "ne6.toml"}}
    assert summary(parse_case(ref, case_dir))["dose"] == summary(parse_case(other, DEMOS))["dose"]


def test_a_blend_is_saved_and_reused(tmp_path):
    data = _demo("cream_blend_pair.toml")
    path = library.save(tmp_path, library.entry_of_case(data, DEMOS, "Pair A/B"))
    entry = library.read_entry(path)
    assert entry.kind == "blend"
    lotion = _demo("lotion_o_w.toml")
    used = library.use(lotion, entry)
    assert "surfactant" not in used and used["blend"] == data["blend"]
    parse_case(used, DEMOS)


def test_names_are_sanitised_and_the_folder_is_never_left(tmp_path):
    doc = library.entry_of_case(_demo("lotion_o_w.toml"), DEMOS, "../../outside")
    path = library.save(tmp_path / "lib", doc)
    assert path.parent == (tmp_path / "lib").resolve() and path.name == "outside.toml"
    with pytest.raises(InputError, match="no letter or digit"):
        library.slug("../..")
    # a symlink in the library is never written through
    target = tmp_path / "elsewhere.toml"
    target.write_text("keep")
    (tmp_path / "lib" / "linked.toml").symlink_to(target)
    doc["library"]["name"] = "linked"
    with pytest.raises(InputError, match="symbolic link"):
        library.save(tmp_path / "lib", doc, overwrite=True)
    assert target.read_text() == "keep"
    # and a symlink is not listed as an entry
    assert "linked" not in [e.path.stem for e in library.entries(tmp_path / "lib", include_builtin=False)]


def test_an_invalid_case_is_not_saved_and_a_broken_file_is_listed_with_its_problem(tmp_path):
    data = _demo("lotion_o_w.toml")
    data["surfactant"]["molar_mass"] = "-3 g/mol"
    with pytest.raises(InputError) as exc:
        library.entry_of_case(data, DEMOS, "bad")
    assert any(line.startswith("surfactant.molar_mass") for line in exc.value.problems)
    (tmp_path / "broken.toml").write_text("[surfactant\n")
    (tmp_path / "empty.toml").write_text("[case]\ntitle = 'x'\n")
    got = {e.path.name: e.problem for e in library.entries(tmp_path, include_builtin=False)}
    assert "not a TOML" in got["broken.toml"] and "no [surfactant]" in got["empty.toml"]
    with pytest.raises(InputError):
        library.use(data, library.read_entry(tmp_path / "broken.toml"))


def test_default_folder_follows_the_environment(monkeypatch, tmp_path):
    monkeypatch.setenv("SIZING_LIBRARY", str(tmp_path / "mine"))
    assert library.default_folder() == tmp_path / "mine"
    monkeypatch.delenv("SIZING_LIBRARY")
    monkeypatch.setenv("XDG_STATE_HOME", str(tmp_path / "state"))
    assert library.default_folder() == tmp_path / "state" / "sizing" / "library"
