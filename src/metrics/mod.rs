//! Metrics: ROUGE, BLEU, fuzzy string similarity.
