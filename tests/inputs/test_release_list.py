"""Release lists: a catalog file, or a folder of releases and strain files named as published."""
import h5py
import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.release_list import ReleaseEntry, load_release_list, release_label


def _release(path, trigger):
    """The release layout (one analysis group, structured posterior_samples, config_file/config as byte strings,
    as pesummary writes it); invented values."""
    with h5py.File(path, "w") as handle:
        group = handle.create_group("C01:IMRPhenomTHM")
        table = np.zeros(4, dtype=[("mass_1", float), ("mass_2", float)])
        group.create_dataset("posterior_samples", data=table)
        group.create_dataset("config_file/config/trigger-time", data=np.array([str(trigger).encode()]))
        group.create_dataset("psds/H1", data=np.ones((3, 2)))


def test_folder_of_releases_and_published_strain(tmp_path):
    _release(tmp_path / "IGWN-GWTC-v1-GW200101_120000_PEDataRelease.h5", 1000000016.0)
    _release(tmp_path / "IGWN-GWTC-v1-GW200202_000000_PEDataRelease.h5", 2000000016.0)
    for name in ("H-H1_GWOSC_4KHZ_R1-1000000000-32.hdf5", "H-H1_GWOSC_4KHZ_R1-999997440-4096.hdf5",
                 "L-L1_GWOSC_16KHZ_R1-999997440-4096.hdf5", "H-H1_GWOSC_4KHZ_R1-1500000000-32.hdf5"):
        (tmp_path / name).write_bytes(b"")
    listed = load_release_list(str(tmp_path))
    found = {entry.label: entry for entry in listed.entries}
    first = found["GW200101_120000"].mapping
    files = first["data"]["files"]
    assert files["H1"]["strain"].endswith("H-H1_GWOSC_4KHZ_R1-1000000000-32.hdf5")  # the shortest covering file
    assert files["L1"]["strain"].endswith("L-L1_GWOSC_16KHZ_R1-999997440-4096.hdf5")
    assert files["L1"].get("psd_off_source") and files["H1"].get("psd_off_source")  # no L1 PSD in the release
    assert first["evidence"]["samples_file"].endswith("GW200101_120000_PEDataRelease.h5")
    assert found["GW200202_000000"].refused.startswith("no strain file in the folder covers the trigger time")
    assert found["GW200202_000000"].mapping == {} and not found["GW200101_120000"].refused
    assert release_label("some_release.h5") == "some_release" and listed.cluster == {}
    assert all(isinstance(entry, ReleaseEntry) for entry in listed.entries)


def test_catalog_file_defaults_overrides_and_psd_choice(tmp_path):
    _release(tmp_path / "r.h5", 1000000016.0)
    (tmp_path / "c.toml").write_text("""
[defaults.evidence]
max_reweight_samples = 5000
[[events]]
label = "a"
release = "r.h5"
strain = { H1 = "h.hdf5" }
overrides = { data = { maximum_frequency = 400.0 } }
[[events]]
label = "b"
release = "r.h5"
strain = { H1 = "h.hdf5" }
psd = "off_source"
""")
    listed = load_release_list(str(tmp_path / "c.toml"))
    a, b = (entry.mapping for entry in listed.entries)
    assert listed.name == "c" and a["evidence"]["max_reweight_samples"] == 5000 and a["evidence"]["methods"] == ["reweighting"]
    assert a["data"]["maximum_frequency"] == 400.0 and "maximum_frequency" not in b["data"]
    assert a["data"]["files"]["H1"] == {"strain": str(tmp_path / "h.hdf5"), "psd_from_samples": True}
    assert b["data"]["files"]["H1"]["psd_off_source"] is True


@pytest.mark.parametrize("text, message", [
    ('[[events]]\nlabel = "a"\nrelease = "r.h5"\nstrain = { H1 = "h" }\n[[events]]\nlabel = "a"\nrelease = "r.h5"\n'
     'strain = { H1 = "h" }\n', "event label 'a' appears twice in c.toml"),
    ('[[events]]\nlabel = "a"\nrelease = "r.h5"\nstrain = { H1 = "h" }\npsd = "mine"\n',
     "'psd' in event 1 of c.toml must be \"release\" or \"off_source\""),
    ('[events]\n', "c.toml lists no [[events]]"),
    ('[colour]\n', "unknown section [colour] in c.toml"),
])
def test_catalog_file_problems(tmp_path, text, message):
    (tmp_path / "c.toml").write_text(text)
    with pytest.raises(MemoryInferError, match=message.replace("[", r"\[").replace("]", r"\]")):
        load_release_list(str(tmp_path / "c.toml"))


@pytest.mark.parametrize("detectors", [True, False])
def test_a_detector_whose_strain_misses_the_trigger_is_refused_not_dropped(tmp_path, detectors):
    """The release analysed H1 and L1 (or, when it does not say, the folder holds H1 strain just before the
    trigger); the H1 file ends 8 s before the trigger: the event is refused naming H1 and that file, never run on
    L1 alone."""
    path = tmp_path / "IGWN-GWTC-v1-GW200101_120000_PEDataRelease.h5"
    _release(path, 1000000040.0)
    if detectors:
        with h5py.File(path, "a") as handle:
            handle.create_dataset("C01:IMRPhenomTHM/config_file/config/detectors", data=np.array([b"['H1', 'L1']"]))
    for name in ("H-H1_GWOSC_4KHZ_R1-1000000000-32.hdf5", "L-L1_GWOSC_4KHZ_R1-1000000000-64.hdf5"):
        (tmp_path / name).write_bytes(b"")
    reason = {entry.label: entry for entry in load_release_list(str(tmp_path)).entries}["GW200101_120000"].refused
    said = ("release 'IGWN-GWTC-v1-GW200101_120000_PEDataRelease.h5' analysed H1" if detectors else
            "the folder holds H1 strain near release 'IGWN-GWTC-v1-GW200101_120000_PEDataRelease.h5'")
    assert reason.startswith(f"{said}, but no H1 strain file in the folder covers its trigger time 1000000040.000 "
                             "(the nearest, 'H-H1_GWOSC_4KHZ_R1-1000000000-32.hdf5', holds 1000000000 to 1000000032)")


def test_two_releases_of_one_event_are_refused_naming_both_files(tmp_path):
    _release(tmp_path / "IGWN-GWTC2p1-v2-GW200101_120000_PEDataRelease.h5", 1000000016.0)
    _release(tmp_path / "IGWN-GWTC3-v1-GW200101_120000_PEDataRelease.h5", 1000000016.0)
    (tmp_path / "H-H1_GWOSC_4KHZ_R1-1000000000-32.hdf5").write_bytes(b"")
    with pytest.raises(MemoryInferError) as caught:
        load_release_list(str(tmp_path))
    assert ("hold the same event (GW200101_120000 in 'IGWN-GWTC2p1-v2-GW200101_120000_PEDataRelease.h5' and "
            "'IGWN-GWTC3-v1-GW200101_120000_PEDataRelease.h5')") in str(caught.value)
