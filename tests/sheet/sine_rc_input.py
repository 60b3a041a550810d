"""A series RC charged from rest by a 1 Hz sinusoid of 10 V (invented values), shared by the tests of the hand
checks: its response is no single exponential (a reach is found by the scan), and v/R swings both ways (the
extremes of an integrand lie inside a window). Each test adds its own tables after it."""

SINE_RC = """
[sheet]
title = "Filtered sinusoid (test)"
[model]
kind = "series_rc"
unknown = "v [V]"
variable = "t [s]"
[parameters]
R = "10 kohm"
C = "10 uF"
[forcing]
form = "sine"
amplitude = "10 V"
frequency = "1 Hz"
[initial]
at = "0 s"
value = "0 V"
"""
