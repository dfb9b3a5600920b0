"""Checks of the user's own inputs and of what a study can claim: IC by signal delay (look-ahead
fingerprint), and the study's warnings (codes with a plain sentence each)."""
