//! Periodic drive waveforms and their Fourier series (spectral lines).
