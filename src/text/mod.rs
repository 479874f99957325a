//! Text engine: normalisation, tokens, figures, sentences.
