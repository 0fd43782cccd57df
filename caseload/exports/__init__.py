"""What leaves the tool: the referral pack (HTML and PDF) and the HL7 FHIR R4 export.

Everything here is pure: it takes the records, the analysis and the day as arguments and
returns text, bytes or plain dicts. Reading the store, permissions, audit and writing files
belong to the services that call it.
"""
