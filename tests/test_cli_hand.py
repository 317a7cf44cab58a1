"""The CLI's hand and materials commands, run in-process."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from figures import assert_drawn
from scipy.constants import mu_0

from magcheck.compare.front.cli import main

CASES = Path(__file__).resolve().parents[1] / "cases"
HAND_KEYS = {"gap_B", "core_B", "path_H", "flux", "flux_linkage", "inductance",
             "incremental_inductance", "energy", "fringing_model", "segments"}


def test_hand_json_contract(tmp_path, capsys):
    out = tmp_path / "hand.json"
    assert main(["hand", str(CASES / "demo_choke.toml"), "--json", str(out)]) == 0
    text = capsys.readouterr().out
    assert "gap0" in text and "Caution" in text
    data = json.loads(out.read_text())
    hand = data["hand"]
    assert HAND_KEYS <= set(hand)
    assert hand["fringing_model"] == "area"
    # Consistency identities of the contract (definitions, not references):
    assert hand["flux_linkage"] == pytest.approx(80 * hand["flux"], rel=1e-12)
    assert hand["inductance"] == pytest.approx(hand["flux_linkage"] / 6.0, rel=1e-12)
    names = [s["name"] for s in hand["segments"]]
    assert names == ["left", "top", "right", "gap0", "bottom"]
    # Ampere's law around the loop: the MMF drops add up to N*I.
    assert sum(s["mmf_drop"] for s in hand["segments"]) == pytest.approx(80 * 6.0, rel=1e-9)
    gap = hand["segments"][3]
    # Source: gap field from the gap MMF drop, B = mu0*F/g (definition of an
    # air-gap reluctance; any fringing model changes only the flux).
    assert gap["B"] == pytest.approx(mu_0 * gap["mmf_drop"] / gap["length"], rel=1e-9)


def test_hand_planar_and_fringing_override(tmp_path):
    p3, p2, p0 = (tmp_path / n for n in ("a.json", "b.json", "c.json"))
    case = str(CASES / "demo_choke.toml")
    assert main(["hand", case, "--json", str(p3)]) == 0
    assert main(["hand", case, "--planar", "--json", str(p2)]) == 0
    assert main(["hand", case, "--fringing", "none", "--json", str(p0)]) == 0
    l3, l2, l0 = (json.loads(p.read_text())["hand"]["inductance"] for p in (p3, p2, p0))
    # Area enlargement adds permeance; the planar form only the in-plane part.
    assert l0 < l2 < l3


def test_bad_case_exit_2(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text((CASES / "demo_choke.toml").read_text().replace('length = "0.6 mm"',
                                                                    'length = "3 A"'))
    assert main(["hand", str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "gaps[0].length = '3 A'" in err and "Traceback" not in err


def test_bad_fringing_override_exit_2(capsys):
    assert main(["hand", str(CASES / "demo_choke.toml"), "--fringing", "aera"]) == 2
    assert "did you mean 'area'" in capsys.readouterr().err


def test_usage_error_exit_2(capsys):
    assert main(["hand"]) == 2


def test_materials_list_and_plot(tmp_path, capsys):
    assert main(["materials"]) == 0
    text = capsys.readouterr().out
    for name in ("demo-sisteel", "demo-softiron", "demo-ferrite"):
        assert name in text
    png = tmp_path / "steel.png"
    assert main(["materials", "demo-sisteel", "--plot", str(png)]) == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert_drawn(png)
    assert main(["materials", "demo-steel"]) == 2
    # the magnet grades too, with H_c = B_r / (mu0 mu_r) (definition of the
    # linear recoil line): 0.40 T / (mu0 1.08) = 295 kA/m
    capsys.readouterr()
    assert main(["materials", "demo-hard-ferrite"]) == 0
    row = next(ln for ln in capsys.readouterr().out.splitlines()
               if ln.startswith("demo-hard-ferrite"))
    assert row.split()[1:5] == ["0.400", "1.08", "295", "-240"]
    assert main(["materials"]) == 0
    assert "demo-rare-earth" in capsys.readouterr().out
    assert main(["materials", "demo-hard-ferite"]) == 2
    assert "did you mean 'demo-hard-ferrite'" in capsys.readouterr().err


def test_ei_case_runs(tmp_path):
    out = tmp_path / "ei.json"
    assert main(["hand", str(CASES / "demo_ei_inductor.toml"), "--json", str(out)]) == 0
    seg = {s["name"]: s for s in json.loads(out.read_text())["hand"]["segments"]}
    # Symmetry: each outer limb carries half the centre-limb flux.
    assert seg["left"]["flux"] == pytest.approx(0.5 * seg["centre"]["flux"], rel=1e-9)
    assert seg["right"]["flux"] == pytest.approx(seg["left"]["flux"], rel=1e-9)
    assert math.isfinite(seg["gap0"]["B"])
    # The gap B is the centre-limb flux over the conformal model's effective
    # area a*b/(sigma_a*sigma_b), a = 16 mm (centre width), b = 24 mm (depth),
    # g = 0.5 mm.  Free face each side of the mid-limb gap: in the plane, to
    # the yoke across each window, (30 - 0.5)/2 = 14.75 mm; on the stack's
    # front and back, to the core's outer edge, (30 + 2*8 - 0.5)/2 = 22.75 mm.
    # Source: Muehlethaler, Kolar, Ecklebe, ICPE-ECCE Asia 2011 [confirmed:
    # approach], symmetric leg-to-leg form sigma = 1/(1 + (2g/(pi w))(1 +
    # ln(pi h/(2g)))) [derived, docs/references.md section 1] with h the element's
    # free face. Tolerance 1e-9: the same closed form evaluated twice.
    def sigma(w: float, h: float, g: float = 0.5e-3) -> float:
        return 1 / (1 + 2 * g / (math.pi * w) * (1 + math.log(math.pi * h / (2 * g))))

    area = 16e-3 * 24e-3 / (sigma(16e-3, 14.75e-3) * sigma(24e-3, 22.75e-3))
    assert seg["gap0"]["area"] == pytest.approx(area, rel=1e-9)
    assert seg["gap0"]["flux"] == pytest.approx(seg["centre"]["flux"], rel=1e-9)  # in series
    assert seg["gap0"]["B"] == pytest.approx(seg["centre"]["flux"] / area, rel=1e-9)


def test_installed_console_script_runs_outside_the_source_tree(tmp_path):
    """The README's quick start runs the installed `magcheck`, not the source
    tree: every sub-package must be in the installed distribution."""
    import shutil
    import subprocess
    import sys

    exe = shutil.which("magcheck")
    if exe is None:
        pytest.skip("magcheck is not installed (run the README's install command)")
    import os

    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}  # the installed copy
    code = ("import magcheck, magcheck.compare.front.commands.check, "
            "magcheck.compare.front.commands.verify, magcheck.fem2d.post, "
            "magcheck.analytic.materials as m; print(m.builtin_names()); "
            "print(magcheck.__version__); print(magcheck.__file__)\n"
            "from importlib import metadata\n"
            "tops = {str(f).split('/')[0] for f in metadata.files('magcheck')}\n"
            "print(sorted(t for t in tops if not t.startswith(('magcheck', '..'))))")
    out = subprocess.run([sys.executable, "-c", code], cwd=tmp_path, capture_output=True,
                         text=True, timeout=120, env=env)
    assert out.returncode == 0, out.stderr
    names, version, where, others = out.stdout.splitlines()
    assert "demo-sisteel" in names
    from importlib import metadata

    assert version == metadata.version("magcheck")
    assert str(tmp_path) not in where
    # one import package: no generic top-level compare/, analytic/ or fem2d/
    # (only magcheck/ and its dist-info; the console script sits in ../bin)
    assert others == "[]"
    out = subprocess.run([exe, "materials"], cwd=tmp_path, capture_output=True, text=True,
                         timeout=120)
    assert out.returncode == 0, out.stderr
