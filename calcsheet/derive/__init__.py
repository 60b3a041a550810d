"""The mathematics: classification, integrating-factor solution, numbers and verification."""
