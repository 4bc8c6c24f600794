"""Stage 1, waveform: spin-weighted harmonics, waveform-model modes, the memory from the modes, and the
memory source model for bilby (oscillatory and memory parts in the frequency domain)."""
