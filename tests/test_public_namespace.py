"""The public face of the package: ``dir(edl_solver)`` lists the public API and nothing else (issue 11: it
showed ``Any``, ``os``, ``TYPE_CHECKING`` and ``annotations``). A rule of this project's API: no outside
reference."""

from __future__ import annotations

import edl_solver as edl

PUBLIC = {"Case", "Slit", "Capillary", "Rectangle", "RectangleProfiles", "Electrolyte", "Ion", "Site", "Wall",
          "Solvent", "Water", "Numerics", "Drive",
          "solve", "sweep", "load", "Channel", "Profiles", "Result", "InputError", "ConvergenceError",
          "fit", "Fit", "frequency_response", "transient", "__version__"}


def test_dir_shows_the_public_api_and_nothing_else() -> None:
    # the lazy names (solve, sweep, Channel) are listed before and after their first use
    assert set(dir(edl)) == PUBLIC
    assert all(getattr(edl, name) is not None for name in PUBLIC)
    assert set(dir(edl)) == PUBLIC
    assert set(edl.__all__) == PUBLIC


def test_no_helper_of_the_module_is_an_attribute() -> None:
    assert not {"os", "Any", "TYPE_CHECKING", "annotations"} & set(vars(edl))
