"""measured_vibration: site surveys and monitoring records (phase 1: the pure modules).

Readers (readers.py), bands (bands.py), the streaming and in-memory method (method.py with
stream.py), assessment against criteria (assess.py) and the second method (verify.py).
"""
