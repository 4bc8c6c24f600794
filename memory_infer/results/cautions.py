"""The cautions every report and result file carries, in one place."""

EVIDENCE = ("A Bayes factor here is evidence under the stated signal models and noise assumptions (stationary "
            "Gaussian noise with the given PSDs, the named waveform model with its memory); it is not a detection "
            "claim. Glitches, calibration errors and waveform systematics must be checked before any claim.")
FORECAST = ("Forecasts assume stationary Gaussian noise, the stated population and waveform model; "
            "fast ln BF at the true parameters ignore parameter uncertainty. " + EVIDENCE)
INVENTED = "Every event, label and number in this demo is invented and simulated. " + EVIDENCE
