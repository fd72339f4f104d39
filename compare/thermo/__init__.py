"""Thermodynamic core: water activity, least work, pure water and brine properties. Pure, vectorised, SI."""
