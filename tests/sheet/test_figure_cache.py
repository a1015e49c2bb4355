"""Figure images are cached by a fingerprint of the figure's id, its data and the house style.

Sources: the kit's own promise (``latticecalc.sheet.figure``): a figure whose id and data did not
change is not drawn again, and any change to either draws it afresh; the house style is one set of
matplotlib settings (``latticecalc.plots.style``) applied by every plot function.
"""

from __future__ import annotations

import base64

import matplotlib
import numpy as np
import pytest

from latticecalc.plots import style
from latticecalc.sheet import display

matplotlib.use("Agg")


@style.styled
def _line_figure(y):
    fig = style.new_figure(4.0, 2.5)
    ax = fig.add_subplot()
    ax.plot(np.arange(len(y)), y)
    return fig


@pytest.fixture
def drawn(monkeypatch):
    """Count the figures actually drawn to PNG."""
    calls = []
    real = display._png

    def counting(fig, dpi):
        calls.append(dpi)
        return real(fig, dpi)

    monkeypatch.setattr(display, "_png", counting)
    return calls


def test_an_unchanged_figure_is_not_drawn_again(tmp_path, drawn):
    first = display.figure(_line_figure([1.0, 2.0, 3.0]), id="fig.a", caption="a", cache=tmp_path)
    second = display.figure(_line_figure([1.0, 2.0, 3.0]), id="fig.a", caption="a", cache=tmp_path)
    assert len(drawn) == 1                                     # the second came from the cache
    assert first.record["png"] == second.record["png"]
    assert base64.b64decode(second.record["png"]).startswith(b"\x89PNG")
    assert len(list((tmp_path / "figures").glob("*.png"))) == 1


def test_changed_data_or_id_draws_afresh(tmp_path, drawn):
    display.figure(_line_figure([1.0, 2.0, 3.0]), id="fig.a", caption="a", cache=tmp_path)
    display.figure(_line_figure([1.0, 2.0, 3.5]), id="fig.a", caption="a", cache=tmp_path)
    display.figure(_line_figure([1.0, 2.0, 3.0]), id="fig.b", caption="b", cache=tmp_path)
    assert len(drawn) == 3


def test_the_style_version_is_part_of_the_key(monkeypatch):
    key = display.figure_fingerprint(_line_figure([1.0, 2.0]), id="fig.a", dpi=130)
    monkeypatch.setattr(style, "STYLE_VERSION", style.STYLE_VERSION + "-changed")
    assert display.figure_fingerprint(_line_figure([1.0, 2.0]), id="fig.a", dpi=130) != key


def test_no_cache_outside_a_project(tmp_path, monkeypatch, drawn):
    monkeypatch.chdir(tmp_path)                                  # no template.toml here
    display.figure(_line_figure([1.0]), id="fig.a", caption="a")
    display.figure(_line_figure([1.0]), id="fig.a", caption="a")
    assert len(drawn) == 2 and not (tmp_path / ".latticecalc-cache").exists()


def test_plain_log_tick_labels():
    # common practice: a log frequency axis is labelled 1, 2, 5, 10 ..., never 4.6×10¹
    with style.house_style():
        fig = style.new_figure()
        ax = fig.add_subplot()
        ax.semilogx([3.0, 300.0], [1.0, 2.0])
        ax.set_xlim(3.0, 300.0)
        style.plain_log_ticks(ax, "x")
        fig.canvas.draw()
        labels = [t.get_text() for t in ax.get_xticklabels() if t.get_text()]
    assert labels and all("10" not in label or label in ("10", "100") for label in labels)
    assert not any("×" in label or "^" in label or "$" in label for label in labels)


def test_spectrum_view_drops_high_passed_bins_and_floors_the_axis():
    f = np.arange(0.0, 100.0, 0.5)
    level = np.full(f.size, 60.0)
    level[:3] = -420.0                                         # DC and high-passed bins, as a record gives them
    level[80] = 90.0
    keep, (bottom, top) = style.spectrum_view(f, level, span_db=60.0)
    assert not keep[:3].any() and keep[3:].all()
    assert bottom >= 90.0 - 60.0 - 2.0 and top == 95.0


@style.styled
def _cell_3d(z):
    fig = style.new_figure(3.0, 3.0)
    ax = fig.add_subplot(projection="3d")
    ax.plot([0.0, 1.0], [0.0, 1.0], [0.0, z])
    for setter in (ax.set_xlim, ax.set_ylim, ax.set_zlim):  # fixed limits: only the data differs
        setter(0.0, 2.0)
    return fig


def test_3d_figures_with_different_data_have_different_keys():
    # a 3D line keeps its data aside until drawn: the key must still see it
    one = display.figure_fingerprint(_cell_3d(1.0), id="fig.cell", dpi=130)
    two = display.figure_fingerprint(_cell_3d(2.0), id="fig.cell", dpi=130)
    assert one != two
    assert display.figure_fingerprint(_cell_3d(1.0), id="fig.cell", dpi=130) == one


def test_axis_range_ticks_and_labels_are_part_of_the_key():
    # the key reads each axis's range, scale, tick places and texts, tick settings and label without making
    # Tick artists: a change to any of them is a different image, so a different key
    def key(change=None):
        fig = _line_figure([1.0, 2.0, 3.0])
        ax = fig.axes[0]
        ax.set_xlabel("time [s]")
        if change is not None:
            change(ax)
        return display.figure_fingerprint(fig, id="fig.a", dpi=130)

    base = key()
    assert key() == base
    changes = {"range": lambda ax: ax.set_xlim(0.0, 5.0), "scale": lambda ax: ax.set_yscale("log"),
               "ticks": lambda ax: ax.set_xticks([0.0, 2.0]), "tick texts": lambda ax: ax.set_xticklabels([]),
               "tick size": lambda ax: ax.tick_params(axis="y", labelsize=14),
               "label": lambda ax: ax.set_xlabel("time [ms]"), "inverted": lambda ax: ax.invert_yaxis()}
    keys = {name: key(change) for name, change in changes.items()}
    assert len(set(keys.values()) | {base}) == len(keys) + 1
    # and a 3D axes' z axis counts too
    fig_a, fig_b = _cell_3d(1.0), _cell_3d(1.0)
    fig_b.axes[0].set_zlim(0.0, 3.0)
    assert display.figure_fingerprint(fig_a, id="fig.cell", dpi=130) != \
        display.figure_fingerprint(fig_b, id="fig.cell", dpi=130)


# --- deferred figures: a plot function's figure is built only when its image is not in the cache -------------
@pytest.fixture
def built(monkeypatch):
    """Count the deferred figures actually built."""
    calls = []
    real = style.DeferredFigure.figure

    def counting(self):
        if not self.built:
            calls.append(self._function.__name__)
        return real(self)

    monkeypatch.setattr(style.DeferredFigure, "figure", counting)
    return calls


def test_a_rerun_with_unchanged_data_neither_builds_nor_draws_the_figure(tmp_path, drawn, built):
    first = display.figure(_line_figure([1.0, 2.0, 3.0]), id="fig.a", caption="a", cache=tmp_path)
    again = _line_figure([1.0, 2.0, 3.0])
    second = display.figure(again, id="fig.a", caption="a", cache=tmp_path)
    assert built == ["_line_figure"] and len(drawn) == 1 and not again.built
    assert first.record["png"] == second.record["png"]


def test_changed_arguments_id_or_resolution_build_afresh(tmp_path, drawn, built):
    display.figure(_line_figure([1.0, 2.0, 3.0]), id="fig.a", caption="a", cache=tmp_path)
    display.figure(_line_figure([1.0, 2.0, 3.0 + 1e-9]), id="fig.a", caption="a", cache=tmp_path)
    display.figure(_line_figure([1.0, 2.0, 3.0]), id="fig.b", caption="b", cache=tmp_path)
    display.figure(_line_figure([1.0, 2.0, 3.0]), id="fig.a", caption="a", cache=tmp_path, dpi=90)
    assert len(built) == 4 and len(drawn) == 4


def test_the_plot_code_and_the_style_are_part_of_the_data_key(monkeypatch):
    key = _line_figure([1.0, 2.0]).data_key()
    assert _line_figure([1.0, 2.0]).data_key() == key
    monkeypatch.setattr(style, "STYLE_VERSION", style.STYLE_VERSION + "-changed")
    assert _line_figure([1.0, 2.0]).data_key() != key
    monkeypatch.undo()
    monkeypatch.setattr(style, "_plot_code_hash", lambda: "another version of the plot modules")
    assert _line_figure([1.0, 2.0]).data_key() != key
    monkeypatch.undo()
    with matplotlib.rc_context({"lines.linewidth": 7.0}):
        assert _line_figure([1.0, 2.0]).data_key() != key


def test_a_figure_changed_after_its_plot_function_is_keyed_by_its_artists(tmp_path, drawn):
    display.figure(_line_figure([1.0, 2.0, 3.0]), id="fig.a", caption="a", cache=tmp_path)
    changed = _line_figure([1.0, 2.0, 3.0])
    changed.axes[0].set_xlim(0.0, 10.0)                        # built here, and changed
    display.figure(changed, id="fig.a", caption="a", cache=tmp_path)
    assert len(drawn) == 2


def test_arguments_that_cannot_be_fingerprinted_fall_back_to_the_artists(tmp_path, drawn):
    class Opaque:
        values = [1.0, 2.0]

    @style.styled
    def plot(data):
        return _line_figure(data.values).figure()

    assert plot(Opaque()).data_key() is None
    display.figure(plot(Opaque()), id="fig.o", caption="o", cache=tmp_path)
    display.figure(plot(Opaque()), id="fig.o", caption="o", cache=tmp_path)
    assert len(drawn) == 1                                     # the artists' key still finds the image
