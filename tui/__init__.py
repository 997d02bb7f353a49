"""beamtone's terminal app (textual).  Not yet built: the command line is the way in for now."""
