import numpy as np
import pytest

from service.engine.plan import CartesianState, Engine, Maneuver, Plan, Spacecraft


def make_plan(**changes) -> Plan:
    """An invented smallsat, 'wren-3', in a 400 km circular equatorial orbit with two burns."""
    fields = dict(
        plan_id="wren-3-trim-01",
        central_body="earth",
        epoch=np.datetime64("2031-05-02T00:00:00", "ms"),
        initial_state=CartesianState(
            "GCRF", (6778.137, 0.0, 0.0), (0.0, (398600.4418 / 6778.137) ** 0.5, 0.0)
        ),
        spacecraft=Spacecraft(540.0, 62.0, (Engine("main", 22.0, 228.0, 1200.0, 0.1),)),
        maneuvers=(
            Maneuver(
                "raise-1",
                np.datetime64("2031-05-02T01:00:00", "ms"),
                "main",
                "TNW",
                (5.0, 0.0, 0.0),
            ),
            Maneuver(
                "raise-2",
                np.datetime64("2031-05-02T01:50:00", "ms"),
                "main",
                "TNW",
                (5.0, 0.0, 0.0),
            ),
        ),
        target_orbit=None,
        profile="default",
        rules={},
        digest="sha256:test",
    )
    fields.update(changes)
    return Plan(**fields)


@pytest.fixture
def plan() -> Plan:
    return make_plan()
