"""Table model against the WPA Equipment Specifications (docs/model.md, section 1)."""

import math

import pytest

from tablecoach.core.table import (
    BUILTIN_TABLES,
    INCH,
    TableError,
    builtin_table,
)
from tablecoach.core.table_files import load_table_file, table_from_mapping


def test_nine_foot_playing_surface_is_100_by_50_inches():
    # WPA Equipment Specifications: 9-ft playing surface 100 x 50 in (+-1/8 in) nose to nose.
    t = builtin_table("9ft")
    assert t.length == pytest.approx(2.540, abs=1e-9)
    assert t.width == pytest.approx(1.270, abs=1e-9)


def test_eight_foot_playing_surface_is_92_by_46_inches():
    # WPA Equipment Specifications: 8-ft playing surface 92 x 46 in.
    t = builtin_table("8ft")
    assert t.length == pytest.approx(92 * 0.0254)
    assert t.width == pytest.approx(46 * 0.0254)


def test_seven_foot_is_the_common_78_by_39():
    # No WPA figure; 78 x 39 in is common practice, no source.
    t = builtin_table("7ft")
    assert (t.length / INCH, t.width / INCH) == pytest.approx((78, 39))


def test_ball_is_two_and_a_quarter_inches():
    # WPA: ball diameter 2 1/4 in +- 0.005 in = 57.15 mm; mass 5.5 to 6 oz (156-170 g).
    for t in BUILTIN_TABLES.values():
        assert t.ball_diameter == pytest.approx(0.05715, abs=1e-9)
        assert t.ball_radius == pytest.approx(0.028575, abs=1e-9)
        assert 0.156 <= t.ball_mass <= 0.170


def test_sight_spacing_is_an_eighth_of_the_length_and_setback_93_7_mm():
    # WPA: sights mark eighths of the length and quarters of the width; 12.5 in apart on a 9-ft;
    # their centres 3 11/16 in (93.7 mm) behind the cushion nose.
    t = builtin_table("9ft")
    assert t.diamond == pytest.approx(12.5 * 0.0254)
    assert t.diamond_across == pytest.approx(t.diamond)
    assert t.sight_setback == pytest.approx(0.0937, abs=5e-5)
    assert t.sight_line("left") == pytest.approx(-t.sight_setback)
    assert t.sight_line("foot") == pytest.approx(t.length + t.sight_setback)


def test_cushion_contact_angle_from_nose_height():
    # WPA nose height 63.5 % of the ball diameter -> sin(theta) = (h - R)/R = 0.27
    # (Mathavan, Jackson and Parkin 2010 contact geometry; docs/model.md).
    t = builtin_table("9ft")
    assert t.nose_height == pytest.approx(0.635 * 0.05715)
    assert math.sin(t.contact_angle) == pytest.approx(0.27, abs=1e-9)


def test_reflection_lines_sit_one_radius_inside_the_noses():
    # Derived in docs/model.md: ball centres reflect about a line R inside the nose.
    t = builtin_table("9ft")
    r = t.ball_radius
    assert t.reflection_line("head") == pytest.approx(r)
    assert t.reflection_line("foot") == pytest.approx(t.length - r)
    assert t.reflection_line("left") == pytest.approx(r)
    assert t.reflection_line("right") == pytest.approx(t.width - r)


def test_corner_mouth_point_to_point():
    # WPA corner mouth 4.5 to 4.625 in point to point; side 5 to 5.125 in.
    t = builtin_table("9ft")
    p = t.pocket("head-left")
    mouth = math.dist(p.jaw_a, p.jaw_b)
    assert 4.5 * INCH - 1e-9 <= mouth <= 4.625 * INCH
    s = t.pocket("side-right")
    assert 5.0 * INCH - 1e-9 <= math.dist(s.jaw_a, s.jaw_b) <= 5.125 * INCH


def test_frozen_ball_is_valid_and_closer_is_not():
    t = builtin_table("9ft")
    r = t.ball_radius
    t.check_position(r, t.width / 2)  # frozen to the head cushion: valid
    t.check_position(t.length - r, t.width - r)  # frozen into the foot-right corner: valid
    with pytest.raises(TableError, match="off the table"):
        t.check_position(r - 1e-4, t.width / 2)
    with pytest.raises(TableError, match="off the table"):
        t.check_position(1.0, t.width - r + 1e-4)


def test_diamonds_round_trip():
    t = builtin_table("8ft")
    x, y = t.to_metres(3.25, 1.5)
    assert t.to_diamonds(x, y) == pytest.approx((3.25, 1.5))


def test_unknown_table_pocket_and_rail_give_one_line():
    with pytest.raises(TableError, match="unknown table 'snooker'"):
        builtin_table("snooker")
    t = builtin_table("9ft")
    with pytest.raises(TableError, match="unknown pocket"):
        t.pocket("middle")
    with pytest.raises(TableError, match="unknown rail"):
        t.reflection_line("top")  # type: ignore[arg-type]


def test_custom_table_from_toml(tmp_path):
    f = tmp_path / "club.toml"
    f.write_text('name = "Club 2"\nsize = "8ft"\n[cloth]\nmu_slide = 0.25\n', encoding="utf-8")
    t = load_table_file(f)
    assert t.name == "Club 2"
    assert t.length == pytest.approx(92 * INCH)
    assert t.cloth.mu_slide == 0.25


def test_custom_table_bad_field_names_file_field_and_range(tmp_path):
    f = tmp_path / "bad.toml"
    f.write_text('name = "Bad"\n[cushion]\nrestitution = 1.4\n', encoding="utf-8")
    with pytest.raises(TableError) as e:
        load_table_file(f)
    msg = str(e.value)
    assert "bad.toml" in msg and "cushion.restitution" in msg and "0.5 to 1" in msg
    assert "\n" not in msg


def test_custom_table_rejects_unknown_field_and_bad_toml(tmp_path):
    with pytest.raises(TableError, match="colour"):
        table_from_mapping({"name": "x", "colour": "blue"})
    f = tmp_path / "broken.toml"
    f.write_text("name = \n", encoding="utf-8")
    with pytest.raises(TableError, match="not valid TOML"):
        load_table_file(f)
