"""The memory likelihood: bilby's ``GravitationalWaveTransient`` with the memory source model.

The memory amplitude A enters linearly, so at one parameter point five noise-weighted inner
products give ln L(A) for every A (README, evidence methods):
``<d,h(A)> = <d,h_osc> + A <d,h_mem>``,
``<h(A),h(A)> = <h_osc,h_osc> + 2A <h_osc,h_mem> + A^2 <h_mem,h_mem>``;
with time marginalization the ``<d,h>`` time series are linear in A in the same way, and bilby's
distance and time marginalizations are functions of exactly these combinations.
"""
from __future__ import annotations

from dataclasses import dataclass

import bilby
import numpy as np
from scipy.special import logsumexp

from bilby.gw.detector.interferometer import Interferometer
from bilby_cython.geometry import get_polarization_tensor_multiple_modes, three_by_three_matrix_contraction

from ..common.errors import MemoryInferError
from ..inputs.config import PHASE_REFUSAL
from ..waveform.source import combined
from .band import band_edges, band_products, project_two


@dataclass
class InnerProducts:
    """The five products summed over detectors (time series of <d,h> when time is marginalized)."""

    d_osc: complex
    d_mem: complex
    osc_osc: float
    osc_mem: float
    mem_mem: float
    d_osc_series: np.ndarray | None = None
    d_mem_series: np.ndarray | None = None


class DistanceQuadrature:
    """The distance-marginalized likelihood by direct quadrature (no lookup table).

    ``ln Z(a, b) = ln int pi(D) exp(a s - b s^2 / 2) dD - ln int pi(D) dD`` with ``s = D_ref / D``, where ``a`` and
    ``b`` are ``Re<d, h>`` and ``<h, h>`` at the reference distance: the integral bilby's lookup table
    interpolates. Composite Gauss-Legendre in ln D (``panels`` x ``order`` nodes; 3,200 by default): the integrand's
    relative width in D is about 1/SNR, so at SNR 50 a panel of width ln(D_max/D_min)/400 still holds it with
    several nodes, and Gauss-Legendre needs no end corrections at the prior's hard edges. Only the nodes around
    the integrand's peak are summed (:meth:`window`; the others add less than e^-50 relative). Accuracy against
    adaptive quadrature is measured in the tests and by ``scripts/distance_accuracy.py``.
    """

    def __init__(self, prior, reference: float, panels: int = 400, order: int = 8):
        low = max(float(prior.minimum), 1e-6 * float(prior.maximum))
        edges = np.linspace(np.log(low), np.log(float(prior.maximum)), panels + 1)
        nodes, weights = np.polynomial.legendre.leggauss(order)
        middle, half = (edges[1:] + edges[:-1]) / 2, np.diff(edges) / 2
        ln_distance = (middle[:, None] + half[:, None] * nodes).ravel()
        distance = np.exp(ln_distance)
        mass = np.asarray(prior.prob(distance), dtype=float) * distance * (half[:, None] * weights).ravel()
        keep = mass > 0
        order = np.argsort(float(reference) / distance[keep])  # ascending in s, for the window search
        self.scale = (float(reference) / distance[keep])[order]
        self.ln_weight = np.log(mass[keep] / mass[keep].sum())[order]
        self.scale_squared = self.scale ** 2
        self.weight_range = float(self.ln_weight.max() - self.ln_weight.min())

    WINDOW_MARGIN = 60.0  # nodes whose exponent lies this far below the peak (beyond the weights' range) are left out

    def window(self, a, b):
        """(first, end) of the nodes around the integrand's peak for every row: ``a s - b s^2 / 2`` is a downward
        parabola in s, and outside the interval where it is within ``WINDOW_MARGIN`` plus the weights' whole
        range of its largest value on the nodes every term is below e^-60 of the largest kept one."""
        count = self.scale.size
        if a.size == 0 or not (np.all(np.isfinite(a)) and np.all(np.isfinite(b))) or np.any(b <= 0):
            return 0, count
        low, high = self.scale[0], self.scale[-1]
        best = np.clip(a / b, low, high)
        peak = a * best - b * best ** 2 / 2
        level = peak - (self.WINDOW_MARGIN + self.weight_range)
        root = np.sqrt(np.maximum(a ** 2 - 2 * b * level, 0.0))
        first = int(np.searchsorted(self.scale, np.min((a - root) / b))) - 1
        end = int(np.searchsorted(self.scale, np.max((a + root) / b), side="right")) + 1
        return max(first, 0), min(end, count)

    def __call__(self, d_inner_h_ref, h_inner_h_ref) -> np.ndarray:
        a, b = np.broadcast_arrays(np.asarray(d_inner_h_ref, dtype=float), np.asarray(h_inner_h_ref, dtype=float))
        first, end = self.window(a.ravel(), b.ravel())
        if end <= first or not (np.all(np.isfinite(a)) and np.all(np.isfinite(b))):
            scale, ln_weight = self.scale[first:end], self.ln_weight[first:end]
            return logsumexp(a[..., None] * scale - b[..., None] * scale ** 2 / 2 + ln_weight, axis=-1)
        # logsumexp over the window's nodes in place: one array of exponents, no further temporaries
        exponent = np.multiply.outer(a, self.scale[first:end])
        exponent -= np.multiply.outer(b / 2, self.scale_squared[first:end])
        exponent += self.ln_weight[first:end]
        peak = exponent.max(axis=-1, keepdims=True)
        exponent -= peak
        np.exp(exponent, out=exponent)
        return np.log(exponent.sum(axis=-1)) + peak[..., 0]


def antenna_factors(detector, parameters, antenna_time, modes) -> dict:
    """``detector.antenna_response`` for each polarization mode; for bilby's own interferometer class the plus and
    cross tensors come from one call of ``get_polarization_tensor_multiple_modes`` of bilby_cython (bilby's compiled
    geometry, which its interferometer uses too: the same numbers)."""
    if modes == ("plus", "cross") and type(detector).antenna_response is Interferometer.antenna_response:
        tensors = get_polarization_tensor_multiple_modes(parameters["ra"], parameters["dec"], antenna_time,
                                                         parameters["psi"], list(modes))
        detector_tensor = detector.geometry.detector_tensor
        return {mode: three_by_three_matrix_contraction(detector_tensor, tensor) for mode, tensor in zip(modes, tensors)}
    return {mode: detector.antenna_response(parameters["ra"], parameters["dec"], antenna_time, parameters["psi"], mode)
            for mode in modes}


class MemoryTransient(bilby.gw.GravitationalWaveTransient):
    """``GravitationalWaveTransient`` for the memory model, with ln L(A) for many A at one point.

    With distance marginalization the marginal is computed by :class:`DistanceQuadrature`, not read from bilby's
    lookup table (whose interpolation errs by ~1e-3 in ln BF at SNR 20-50, the size of a second-generation
    event's whole memory ln BF). For long arrays (the time series of time marginalization) only the entries within
    50 of the largest are recomputed; the others weigh less than e^-50 of the total.
    """

    EXACT_ENTRIES = 512

    def __init__(self, interferometers, waveform_generator, priors=None, distance_marginalization=False,
                 time_marginalization=False, phase_marginalization=False, **kwargs):
        if phase_marginalization:
            raise MemoryInferError(PHASE_REFUSAL)
        if kwargs.get("calibration_marginalization"):
            raise MemoryInferError("calibration marginalization is not supported with the memory likelihood")
        if (distance_marginalization or time_marginalization) and priors is None:
            raise MemoryInferError("distance or time marginalization needs the prior to marginalize over")
        distance_prior = priors.get("luminosity_distance") if distance_marginalization else None
        super().__init__(interferometers, waveform_generator, priors=priors,
                         distance_marginalization=distance_marginalization,
                         time_marginalization=time_marginalization, phase_marginalization=False, **kwargs)
        self.distance_quadrature = (DistanceQuadrature(distance_prior, self._ref_dist)
                                    if distance_marginalization else None)
        self._detector_arrays = {}
        self._recent_parts = {}

    def __getstate__(self):  # the kept arrays stay behind when the likelihood goes to another process
        state = self.__dict__.copy()
        state["_detector_arrays"], state["_recent_parts"] = {}, {}
        return state

    def detector_arrays(self, detector):
        """(frequency mask, masked PSD, masked frequencies) of one detector, kept while its PSD object, segment,
        band and window stay the same (bilby recomputes the PSD array on every access)."""
        return self._kept_arrays(detector)[1:4]

    def _kept_arrays(self, detector):
        """(key, mask, masked PSD, masked frequencies, band edges or None): :meth:`detector_arrays`, and the
        (first, end) indices of the band when the mask is one unbroken run (:func:`.band.band_edges`)."""
        data = detector.strain_data
        key = (id(detector.power_spectral_density), data.duration, data.sampling_frequency, detector.minimum_frequency,
               detector.maximum_frequency, getattr(data, "window_factor", None))
        cached = self._detector_arrays.get(detector.name)
        if cached is None or cached[0] != key:
            mask = detector.frequency_mask
            cached = (key, mask, detector.power_spectral_density_array[mask], detector.frequency_array[mask],
                      band_edges(mask))
            self._detector_arrays[detector.name] = cached
        return cached

    def _responses(self, detector, polarization_sets, parameters):
        """``detector.get_detector_response`` for several polarization sets at one point, with the antenna
        pattern, time shift and calibration computed once (the same arithmetic as bilby's, step by step)."""
        _, mask, _, frequencies, band = self._kept_arrays(detector)
        antenna_time = parameters["geocent_time"] if detector.reference_time is None else detector.reference_time
        factors = antenna_factors(detector, parameters, antenna_time, tuple(polarization_sets[0]))
        time_shift = detector.time_delay_from_geocenter(parameters["ra"], parameters["dec"], parameters["geocent_time"])
        dt = (parameters["geocent_time"] - detector.strain_data.start_time) + time_shift
        recalibrated = type(detector.calibration_model) is not bilby.gw.detector.calibration.Recalibrate  # else 1
        if band is not None and len(polarization_sets) == 2 and set(factors) == {"plus", "cross"}:
            # one compiled pass over the band (inference/band.py)
            calibration = np.empty(0, dtype=complex)
            if recalibrated:
                calibration = np.asarray(detector.calibration_model.get_calibration_factor(
                    frequencies, prefix="recalib_{}_".format(detector.name), **parameters), dtype=complex)
            (oscillatory, memory), out = polarization_sets, np.zeros((2, mask.size), dtype=complex)
            project_two(*(np.ascontiguousarray(part[mode], dtype=complex) for part in (oscillatory, memory)
                          for mode in ("plus", "cross")), float(factors["plus"]), float(factors["cross"]), band[0],
                        frequencies, -2 * np.pi * dt, calibration, out[0], out[1])
            return [out[0], out[1]]
        shift = np.zeros(mask.size, dtype=complex)  # bilby's mask, time shift and calibration as one factor
        shift[mask] = np.exp(-1j * 2 * np.pi * dt * frequencies)
        if recalibrated:
            shift[mask] *= detector.calibration_model.get_calibration_factor(
                frequencies, prefix="recalib_{}_".format(detector.name), **parameters)
        out = []
        for polarizations in polarization_sets:
            signal = sum(polarizations[mode] * factors[mode] for mode in polarizations)
            signal *= shift
            out.append(signal)
        return out

    def _setup_distance_marginalization(self, lookup_table=None):
        """bilby's lookup table only where it is used: to pick the time bins worth exact quadrature."""
        if self.time_marginalization:
            super()._setup_distance_marginalization(lookup_table)

    def distance_marginalized_likelihood(self, d_inner_h, h_inner_h, parameters=None):
        """Distance-marginalized ln L by direct quadrature (see the class docstring)."""
        d_ref, h_ref = self._setup_rho(d_inner_h, h_inner_h, parameters=parameters)
        d_ref, h_ref = np.broadcast_arrays(np.real(d_ref), np.real(h_ref))
        if d_ref.size <= self.EXACT_ENTRIES:
            return self.distance_quadrature(d_ref, h_ref)
        table = np.array(super().distance_marginalized_likelihood(d_inner_h, h_inner_h, parameters=parameters),
                         dtype=float)
        close = table > np.max(table) - 50
        table[close] = self.distance_quadrature(d_ref[close], h_ref[close])
        return table

    def _polarization_parts(self, parameters):
        """(oscillatory, memory) polarizations: handed over by the memory generator, or for another
        generator around the memory model rebuilt as (A = 1) - (A = 0)."""
        if hasattr(self.waveform_generator, "parts"):
            return self.waveform_generator.parts(parameters)
        base = dict(parameters, memory_amplitude=0.0)
        oscillatory = self.waveform_generator.frequency_domain_strain(base)
        if oscillatory is None:
            return None, None
        oscillatory = {k: v.copy() for k, v in oscillatory.items()}
        with_memory = self.waveform_generator.frequency_domain_strain(dict(base, memory_amplitude=1.0))
        memory = {k: with_memory[k] - oscillatory[k] for k in oscillatory}
        return oscillatory, memory

    def projected_parts(self, parameters):
        """Per detector, the (oscillatory, memory) responses at one point (None when the waveform failed).
        The last two points' responses are kept (the fast estimates ask for each point twice)."""
        parameters = dict(parameters)
        key = (tuple(sorted((k, v) for k, v in parameters.items() if isinstance(v, (int, float, str, np.number)))),
               tuple(float(d.strain_data.start_time) for d in self.interferometers))
        if key in self._recent_parts:
            return self._recent_parts[key]
        oscillatory, memory = self._polarization_parts(parameters)
        if oscillatory is None:
            return None
        if self.time_marginalization and self.jitter_time:
            parameters["geocent_time"] += parameters["time_jitter"]
        parameters.update(self.get_sky_frame_parameters(parameters))
        parts = [tuple(self._responses(detector, (oscillatory, memory), parameters))
                 for detector in self.interferometers]
        if len(self._recent_parts) >= 2:
            self._recent_parts.pop(next(iter(self._recent_parts)))
        self._recent_parts[key] = parts
        return parts

    def network_product(self, first, second) -> float:
        """Real noise-weighted inner product summed over detectors of two per-detector response lists
        (bilby's ``noise_weighted_inner_product`` on the detectors' bands)."""
        duration = self.waveform_generator.duration
        total = 0.0
        for detector, a, b in zip(self.interferometers, first, second):
            mask, psd, _ = self.detector_arrays(detector)
            total += float(np.real(4 / duration * np.sum(np.conj(a[mask]) * b[mask] / psd)))
        return total

    def inner_products(self, parameters) -> InnerProducts | None:
        """The five products at one point (None when the waveform failed)."""
        parts = self.projected_parts(parameters)
        if parts is None:
            return None
        total = InnerProducts(0j, 0j, 0.0, 0.0, 0.0)
        duration = self.waveform_generator.duration
        for detector, (s_osc, s_mem) in zip(self.interferometers, parts):
            _, mask, psd, _, band = self._kept_arrays(detector)
            data = detector.strain_data
            if band is not None and not self.time_marginalization:  # one compiled pass over the band
                d_osc, d_mem, osc_osc, osc_mem, mem_mem = band_products(
                    s_osc, s_mem, np.ascontiguousarray(data.frequency_domain_strain, dtype=complex), psd, band[0])
                scale = 4 / data.duration
                total.d_osc += scale * d_osc
                total.d_mem += scale * d_mem
                total.osc_osc += scale * osc_osc
                total.osc_mem += scale * osc_mem
                total.mem_mem += scale * mem_mem
                continue
            # bilby's noise-weighted inner products of (oscillatory, memory, data) with one another on the band,
            # all from one pass; einsum, not BLAS, so that the sums do not depend on the thread count
            rows = np.array([s_osc[mask], s_mem[mask], data.frequency_domain_strain[data.frequency_mask]])
            gram = 4 / data.duration * np.einsum("in,jn->ij", np.conj(rows), rows / psd)
            total.d_osc += gram[0, 2]
            total.d_mem += gram[1, 2]
            total.osc_osc += float(gram[0, 0].real)
            total.osc_mem += float(gram[0, 1].real)
            total.mem_mem += float(gram[1, 1].real)
            if self.time_marginalization:
                psd, strain = detector.power_spectral_density_array, detector.frequency_domain_strain
                weight = 4 / duration * strain.conjugate()[:-1] / psd[:-1]
                series_osc = np.fft.fft(s_osc[:-1] * weight)
                series_mem = np.fft.fft(s_mem[:-1] * weight)
                total.d_osc_series = series_osc if total.d_osc_series is None else total.d_osc_series + series_osc
                total.d_mem_series = series_mem if total.d_mem_series is None else total.d_mem_series + series_mem
        return total

    def log_likelihood_ratio_curve(self, parameters, amplitudes) -> np.ndarray:
        """ln L(A) - ln L_noise for every A in ``amplitudes`` at one point, from five inner products."""
        amplitudes = np.atleast_1d(np.asarray(amplitudes, dtype=float))
        products = self.inner_products(parameters)
        if products is None:
            return np.full(amplitudes.shape, -np.inf)
        return self.curve_from_products(products, parameters, amplitudes)

    def curve_from_products(self, products: InnerProducts, parameters, amplitudes) -> np.ndarray:
        parameters = dict(parameters)
        if self.time_marginalization and self.jitter_time:
            parameters["geocent_time"] += parameters["time_jitter"]
        amplitudes = np.asarray(amplitudes, dtype=float)
        d_inner_h = combined(products.d_osc, products.d_mem, amplitudes)
        h_inner_h = products.osc_osc + 2 * amplitudes * products.osc_mem + amplitudes ** 2 * products.mem_mem
        if not self.time_marginalization:  # both closed forms take arrays of A at once
            if self.distance_marginalization:
                return np.real(self.distance_marginalized_likelihood(d_inner_h, h_inner_h, parameters=parameters))
            return np.real(d_inner_h) - h_inner_h / 2
        out = np.empty(len(amplitudes))
        for k, amplitude in enumerate(amplitudes):
            snrs = self._CalculatedSNRs(
                d_inner_h=combined(products.d_osc, products.d_mem, amplitude),
                optimal_snr_squared=products.osc_osc + 2 * amplitude * products.osc_mem
                + amplitude ** 2 * products.mem_mem)
            if self.time_marginalization:
                snrs.d_inner_h_array = combined(products.d_osc_series, products.d_mem_series, amplitude)
            out[k] = float(np.real(self.compute_log_likelihood_from_snrs(snrs, parameters=parameters)))
        return out


def fixed_point_log_ratio(products: InnerProducts) -> float:
    """Fixed-parameter ``ln Lambda = <d - h_osc, h_mem> - <h_mem, h_mem> / 2``."""
    return float(np.real(products.d_mem) - products.osc_mem - products.mem_mem / 2)


def memory_snr(products: InnerProducts) -> float:
    """Optimal network SNR of the memory alone, ``sqrt(<h_mem, h_mem>)``."""
    return float(np.sqrt(max(products.mem_mem, 0.0)))
