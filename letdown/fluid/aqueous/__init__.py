"""Water beside the gas: water content and dew point, hydrate formation temperatures, methanol and
MEG, and the aqueous phase (freezing point, density). It sits above the core thermodynamics
(``eos``, ``flash``, ``kernels``), which never import it."""
