"""The pictures in docs/gallery/ are the demo renders of the specs they name, so the README's
and the gallery's pictures never drift from what figspec draws."""

from __future__ import annotations

import re

import pytest

from figspec.output.compare import rms_difference
from helpers import ROOT, SPECS

GALLERY = ROOT / "docs" / "gallery"
PICTURES = sorted(GALLERY.glob("*.png"))


def test_every_picture_is_named_in_the_gallery_page_and_has_a_spec():
    page = (ROOT / "docs" / "gallery.md").read_text(encoding="utf-8")
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    shown = set(re.findall(r"gallery/(\w+)\.png", page)) | set(re.findall(r"docs/gallery/(\w+)\.png", readme))
    assert shown == {p.stem for p in PICTURES}
    assert all((SPECS / f"{p.stem}.toml").is_file() for p in PICTURES)


@pytest.mark.parametrize("picture", PICTURES, ids=[p.stem for p in PICTURES])
def test_each_picture_is_its_specs_render(picture, demo_render, tmp_path):
    rendered = demo_render[0] / picture.name
    result = rms_difference(picture, rendered, 0.5, tmp_path / f"{picture.stem}.difference.png")
    assert result.passed, f"{picture.name} differs from figures/{picture.name}: {result.message}; refresh docs/gallery"
