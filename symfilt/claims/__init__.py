"""Hand derivations: safe parsing of a claim and the judgement of its equivalence."""
