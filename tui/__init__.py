"""beamtone's terminal app (textual): ``beamtone`` opens it, ``beamtone FILE`` opens it on a
worksheet.  ``app.py`` is the thin App; ``screens/``, ``widgets/`` and ``dialogs/`` hold the
rest.  The app computes nothing itself: it calls the front door of ``beamtone.calc``."""
