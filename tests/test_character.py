"""Saddle character from Pauling bond orders (Pauling, J. Am. Chem. Soc. 1947, 69, 542)."""

from __future__ import annotations

import math

import pytest

from elimscan.character import fractional_cleavage, saddle_character


def test_pauling_bond_order_definition():
    assert fractional_cleavage(1.09, 1.09) == 0.0
    # one Pauling constant of stretch leaves bond order 1/e
    assert fractional_cleavage(1.09, 1.39) == pytest.approx(1 - 1 / math.e)
    assert fractional_cleavage(1.09, 3.0) > 0.99


def test_labels_follow_which_bond_leads():
    assert saddle_character(1.09, 1.60, 1.95, 2.05).label == "carbanion-like"
    assert saddle_character(1.09, 1.15, 1.95, 2.60).label == "carbocation-like"
    assert saddle_character(1.09, 1.35, 1.95, 2.25).label == "central"
