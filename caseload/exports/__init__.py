"""Files made for people outside the interface: the weekly summary in four formats, one patient's
referral pack (HTML and PDF) and the HL7 FHIR R4 export.

The referral pack and FHIR renderers are pure: they take the records, the analysis and the day as
arguments and return text, bytes or plain dicts; reading the store, permissions, audit and writing
files belong to the application that calls them.
"""
