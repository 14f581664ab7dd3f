"""Spec round trip: load → write → load gives an equal garment; write → load → write the same text."""

import tomllib

import pytest

import garments
from garnav.spec import dumps_garment, garment_problems, garment_to_dict, load_garment, loads_garment, save_garment

CATALOGUE = [garments.single_panel, garments.two_panels, garments.tube]


@pytest.mark.parametrize("build", CATALOGUE, ids=lambda f: f.__name__)
def test_catalogue_round_trip(build):
    g = build()
    assert garment_problems(g) == []
    text = dumps_garment(g)
    g2 = loads_garment(text)
    assert g2 == g
    assert dumps_garment(g2) == text
    # the text parses (stdlib tomllib, an independent TOML reader) to exactly the dict we meant
    assert tomllib.loads(text) == garment_to_dict(g)


def test_save_and_load_file(tmp_path, two_panels):
    path = save_garment(two_panels, tmp_path / "sub" / "g.toml")
    assert load_garment(path) == two_panels
    assert not [p for p in path.parent.iterdir() if p.name.endswith(".tmp")]


def test_save_refuses_a_garment_with_problems(tmp_path, two_panels):
    import dataclasses

    from garnav import Robot, SpecError

    bad = dataclasses.replace(two_panels, robot=Robot(radius_mm=0.0))
    target = tmp_path / "g.toml"
    with pytest.raises(SpecError, match="radius_mm"):
        save_garment(bad, target)
    assert not target.exists() and list(tmp_path.iterdir()) == []
    save_garment(bad, target, check=False)  # explicitly unchecked: written as is
    with pytest.raises(SpecError, match="radius_mm"):
        load_garment(target)
