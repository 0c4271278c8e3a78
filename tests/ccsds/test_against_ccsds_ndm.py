"""An independent reader agrees with ours: ccsds-ndm (PyPI, test dependency only) reads the
test-data OPMs (the standard's examples, see test_opm_reader) and the OPMs write_opm makes,
and gives the same epochs, state, Keplerian elements, spacecraft parameters, covariance and
maneuvers. ccsds-ndm holds numbers as float: ours (Decimal) must convert to exactly the same
float."""

from pathlib import Path

import numpy as np
import pytest
from ccsds_ndm.ndm_io import NdmIo

from service.ccsds.opm import parse_opm, write_opm
from tests.ccsds.opm_samples import inserted, valid_text

DATA = Path(__file__).parent / "data"
FILES = sorted(DATA.glob("*.opm"))


def _num(quantity):
    return None if quantity is None else float(getattr(quantity, "value", quantity))


def assert_agree(text: str) -> None:
    ours = parse_opm(text)
    theirs = NdmIo().from_string(text)
    assert theirs.header.originator == ours.header.originator
    assert theirs.header.creation_date == ours.header.creation_date
    segment = theirs.body.segment
    meta = segment.metadata
    assert (meta.object_name, meta.object_id, meta.center_name, meta.ref_frame) == (
        ours.metadata.object_name,
        ours.metadata.object_id,
        ours.metadata.center_name,
        ours.metadata.ref_frame,
    )
    assert meta.time_system == ours.metadata.time_system
    data = segment.data
    sv = data.state_vector
    assert sv.epoch == ours.state.epoch.text
    assert [_num(getattr(sv, a)) for a in ("x", "y", "z", "x_dot", "y_dot", "z_dot")] == [
        float(v) for v in ours.state.position_km + ours.state.velocity_km_s
    ]
    kep = data.keplerian_elements
    if ours.keplerian is None:
        assert kep is None
    else:
        k = ours.keplerian
        assert [
            _num(getattr(kep, a))
            for a in (
                "semi_major_axis",
                "eccentricity",
                "inclination",
                "ra_of_asc_node",
                "arg_of_pericenter",
                "true_anomaly",
                "mean_anomaly",
                "gm",
            )
        ] == [
            None if v is None else float(v)
            for v in (
                k.semi_major_axis_km,
                k.eccentricity,
                k.inclination_deg,
                k.ra_of_asc_node_deg,
                k.arg_of_pericenter_deg,
                k.true_anomaly_deg,
                k.mean_anomaly_deg,
                k.gm_km3_s2,
            )
        ]
    sc = data.spacecraft_parameters
    if ours.spacecraft is None:
        assert sc is None
    else:
        s = ours.spacecraft
        assert [
            _num(getattr(sc, a))
            for a in ("mass", "solar_rad_area", "solar_rad_coeff", "drag_area", "drag_coeff")
        ] == [
            None if v is None else float(v)
            for v in (
                s.mass_kg,
                s.solar_rad_area_m2,
                s.solar_rad_coeff,
                s.drag_area_m2,
                s.drag_coeff,
            )
        ]
    cov = data.covariance_matrix
    if ours.covariance is None:
        assert cov is None
    else:
        assert [_num(getattr(cov, k.lower())) for k, _ in ours.covariance] == [
            float(v) for _, v in ours.covariance
        ]
    assert len(data.maneuver_parameters) == len(ours.maneuvers)
    for them, us in zip(data.maneuver_parameters, ours.maneuvers, strict=True):
        assert them.man_epoch_ignition == us.epoch_ignition.text
        assert them.man_ref_frame == us.ref_frame
        assert [_num(them.man_duration), _num(them.man_delta_mass)] == [
            float(us.duration_s),
            float(us.delta_mass_kg),
        ]
        assert [_num(them.man_dv_1), _num(them.man_dv_2), _num(them.man_dv_3)] == [
            float(v) for v in us.dv_km_s
        ]
        assert list(them.comment) == list(us.comments)
    user = data.user_defined_parameters
    theirs_user = [] if user is None else [(p.parameter, p.value) for p in user.user_defined]
    assert theirs_user == list(ours.user_defined)


@pytest.mark.parametrize("path", FILES, ids=[p.name for p in FILES])
def test_agrees_on_the_standards_examples(path):
    assert_agree(path.read_text(encoding="ascii"))


@pytest.mark.parametrize("path", FILES, ids=[p.name for p in FILES])
def test_reads_what_we_write_from_the_standards_examples(path):
    assert_agree(write_opm(parse_opm(path.read_text(encoding="ascii"))))


def test_reads_what_we_write_from_an_invented_plan_message():
    text = write_opm(parse_opm(valid_text()))
    assert_agree(text)
    # and the epochs ccsds-ndm sees are the ones we put on UTC
    ours = parse_opm(text)
    assert ours.maneuvers[0].epoch_ignition.utc == np.datetime64("2031-05-02T01:00:00")


def test_reads_what_we_write_with_several_maneuvers_and_day_of_year_epochs():
    second = (
        "MAN_EPOCH_IGNITION = 2031-122T03:00:00.250\nMAN_DURATION = 0.0 [s]\n"
        "MAN_DELTA_MASS = -0.5 [kg]\nMAN_REF_FRAME = RTN\nMAN_DV_1 = 1.5E-3 [km/s]\n"
        "MAN_DV_2 = -0.001\nMAN_DV_3 = 0.0"
    )
    assert_agree(write_opm(parse_opm(inserted(28, second))))
