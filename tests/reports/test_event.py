from memory_infer.reports.event import event_page
from memory_infer.results.event import EventResult


def test_page_rebuilt_from_the_file_equals_the_one_written_at_run_time(small_event_run):
    result = EventResult.load(str(small_event_run / "evidence.json"))
    figures = result.figures
    assert set(figures) >= {"whitened", "spectrum", "weights", "reference_point"}
    assert len(figures["weights"]["none"]) > 10 and len(figures["whitened"]["CE"]["data"]) > 100
    assert result.free_amplitude["samples"]
    page = event_page(result)
    assert page == (small_event_run / "report.html").read_text()
    assert "not a detection claim" in page and page.count("<img") == 4


def test_page_without_figures_data_still_renders():
    # only the two figures that draw their own "nothing here" text (amplitude, weights); no data figures
    page = event_page(EventResult(event="bare"))
    assert "Memory evidence for bare" in page and "not a detection claim" in page
    assert page.count("<img") == 2 and "Whitened data" not in page and "Memory spectrum" not in page


def test_page_states_the_model_reference_frequency_and_calibration():
    result = EventResult(event="calibrated", settings={
        "approximant": "IMRPhenomTHM", "reference_frequency": 15.0,
        "reference_frequency_from": "the samples file's metadata",
        "calibration": {"kind": "constant", "detectors": ["H1: cubic-spline calibration, 10 nodes from 20 to 512 Hz "
                                                          "(constant, 20 free parameters)"]}})
    page = event_page(result)
    assert "reference frequency 15 Hz (from the samples file&#x27;s metadata)" in page
    assert "H1: cubic-spline calibration, 10 nodes" in page
    assert "exactly calibrated" in event_page(EventResult(event="plain", settings={"approximant": "IMRPhenomTHM"}))


def test_a_simulated_event_page_lists_its_injection():
    from memory_infer.reports.event import event_page

    result = EventResult(event="sim", injection={"memory_amplitude": 0.0, "mass_1": 36.0, "luminosity_distance": 900.0},
                         control=EventResult.control_reason(False, {"memory_amplitude": 0.0}))
    text = event_page(result)
    assert "Injection (simulated data)" in text and "<td>memory amplitude A</td><td>0</td>" in text
    assert "<td>luminosity_distance</td><td>900</td><td>Mpc</td>" in text and "A control event" in text
    assert EventResult.control_reason(True, None).startswith("marked as a control")
    assert EventResult.control_reason(False, {"memory_amplitude": 1.0}) == ""


def test_figures_name_quantity_and_unit_and_keep_to_the_band():
    from memory_infer.reports.event import draw_amplitude, draw_spectrum, weights_label

    frequency = [5.0, 10.0, 20.0, 40.0, 80.0, 160.0]
    spectrum = {"minimum_frequency": 20.0, "detectors": {"H1": {
        "frequency": frequency, "memory": [0.0, 0.0, 3e-23, 1e-23, 3e-24, 1e-24], "asd": [None, 1e-21, 1e-23, 4e-24,
                                                                                           3e-24, 4e-24]}}}
    figure = draw_spectrum(spectrum)
    axis = figure.axes[0]
    assert axis.get_ylabel() == "strain amplitude spectral density [1/√Hz]" and axis.get_xlim() == (20.0, 160.0)
    memory_line = axis.get_lines()[0]
    assert list(memory_line.get_xdata()) == [20.0, 40.0, 80.0, 160.0]  # no masked zeros below the band
    labels = [t.get_text() for t in axis.get_legend().get_texts()]
    assert any("2√f |h̃(f)|" in t for t in labels) and any("ASD" in t for t in labels)
    amplitude = draw_amplitude(EventResult(event="e")).axes[0]
    legend = [t.get_text() for t in amplitude.get_legend().get_texts()]
    assert "general relativity (A = 1)" in legend and "no memory (A = 0)" in legend
    assert "A = 0" in weights_label("none") and "A = 1" in weights_label("memory")


def test_a_control_page_expects_a_negative_ln_bf_and_shows_times_and_parameter_roles():
    # the expectation for a known signal in Gaussian noise: ln BF+ = (A_true - 1/2) rho^2 (PRD 46, 5236 (1992))
    from memory_infer.reports.event import event_page
    from memory_infer.results.event import EventResult

    result = EventResult(event="control", injection={"memory_amplitude": 0.0, "geocent_time": 1_000_000_002.0},
                         memory_snr={"value": 4.0, "point": "the injection", "method": "noise-weighted inner product"},
                         settings={"parameters": {"sampled": ["phase"], "fixed": {"mass_1": 36.0,
                                                                                  "geocent_time": 1_000_000_002.0}}})
    page = event_page(result)
    assert "(A − 1/2) ρ² = -8.000" in page and "ρ²/2 = 8.000" not in page
    assert "1000000002.000" in page and "1e+09" not in page
    assert "Sampled: phase." in page and "Parameters sampled and fixed" in page
    free = event_page(EventResult(event="real", memory_snr={"value": 4.0, "point": "p", "method": "m"}))
    assert "ρ²/2 = 8.000 if the data hold the memory" in free and "−ρ²/2 = -8.000 if they hold none" in free
