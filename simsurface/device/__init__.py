"""The measured device around the wire: gate electrostatics, a bulk channel in parallel, the four-terminal
reading, and the smooth magnetoresistance backgrounds of a real trace.

Pure functions and small frozen objects; nothing here runs a transport sweep. The plan combines them with the
simulated surface conductance.
"""

__all__: list[str] = []
