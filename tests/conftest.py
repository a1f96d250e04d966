"""Shared fixtures for the ridesim tests, and the switch that skips slow tests.

Tests marked ``@pytest.mark.slow`` (long simulations, big sweeps) run only when the
environment variable ``RIDESIM_SLOW=1`` is set; CI leaves it unset. With ``CI`` set,
hypothesis draws its examples deterministically.
"""

import os
import re

import pytest
from hypothesis import settings

import ridesim as rs

# In CI the property tests draw the same examples every run (a failure there can be
# reproduced); locally they explore new random examples each time.
settings.register_profile("ci", derandomize=True, print_blob=True)
if os.environ.get("CI"):
    settings.load_profile("ci")


def pytest_collection_modifyitems(config, items):
    """Skip the tests marked ``slow`` unless RIDESIM_SLOW=1."""
    if os.environ.get("RIDESIM_SLOW", "") == "1":
        return
    skip_slow = pytest.mark.skip(reason="slow test: set RIDESIM_SLOW=1 to run it")
    for item in items:
        if "slow" in item.keywords:
            item.add_marker(skip_slow)


@pytest.fixture
def raises_one_line():
    """Check that a call raises ``exc`` with a one-line message matching every pattern.

    Usage: ``msg = raises_one_line(rs.InputError, ["apothem", "> 0"], rs.Wheel.polygon, 4, -1.0)``.
    The patterns are regular expressions searched case-insensitively; the message is
    returned for further checks.
    """

    def check(exc, patterns, fn, *args, **kwargs):
        with pytest.raises(exc) as info:
            fn(*args, **kwargs)
        message = str(info.value)
        assert isinstance(info.value, rs.RidesimError), type(info.value)
        assert "\n" not in message, f"message is not one line: {message!r}"
        for pattern in patterns:
            assert re.search(pattern, message, flags=re.IGNORECASE), (
                f"message {message!r} does not match {pattern!r}")
        return message

    return check


@pytest.fixture
def square_wheel():
    """Square of apothem 0.3 m, face down, axle at the centre (the classic square wheel)."""
    return rs.Wheel.polygon(sides=4, apothem=0.3)


@pytest.fixture
def demo_focus_ellipse():
    """Ellipse 0.05 x 0.04 m with the axle at a focus, as in scenarios/ellipse_pull_toy.toml."""
    return rs.Wheel.ellipse(semi_axes=(0.05, 0.04), axle=(0.03, 0.0))


@pytest.fixture
def wave_track():
    """Cosine track of amplitude 0.02 m and wavelength 0.3 m (scenarios/wave_track_sculpture.toml)."""
    return rs.Track.wave(amplitude=0.02, wavelength=0.3)
