"""geomgen: balance study, correction geometry and verified solids for pressed-up crank webs."""

__version__ = "0.1.0"
