"""beamtone's command line (thin: parsing and printing around ``calc``)."""
