//! Worked examples from the papers that define the metrics.

use plumbline::metrics::bleu::modified_precision;
use plumbline::metrics::fuzzy::{jaro, jaro_winkler, levenshtein, levenshtein_similarity};
use plumbline::metrics::rouge::{rouge_l, rouge_n};

fn words(s: &str) -> Vec<String> {
    s.split_whitespace().map(str::to_owned).collect()
}

fn approx(ours: f64, theirs: f64, tol: f64) -> bool {
    (ours - theirs).abs() <= tol
}

// Source: Papineni, Roukos, Ward, Zhu 2002, "BLEU: a Method for Automatic
// Evaluation of Machine Translation", section 2.1.1, Example 2. Lower-cased
// as the paper counts them (its reference 1 "The cat is on the mat" holds
// "the" twice), final full stops dropped.
#[test]
fn papineni_example_2_modified_unigram_precision_is_2_of_7() {
    let cand = words("the the the the the the the");
    let refs = vec![words("the cat is on the mat"), words("there is a cat on the mat")];
    assert_eq!(modified_precision(&cand, &refs, 1), (2, 7));
    // Same section: "the (implausible) candidate achieves a modified bigram precision of 0".
    assert_eq!(modified_precision(&cand, &refs, 2).0, 0);
}

// Source: Papineni et al. 2002, section 2.1 Example 1 and section 2.1.1:
// candidate 1 has modified unigram precision 17/18 and bigram 10/17;
// candidate 2 has 8/14 and 1/13. (Sentences and figures from memory;
// recomputed independently in Python before being written down here.)
#[test]
fn papineni_example_1_modified_precisions() {
    let refs: Vec<Vec<String>> = [
        "It is a guide to action that ensures that the military will forever heed Party commands",
        "It is the guiding principle which guarantees the military forces always being under the command of the Party",
        "It is the practical guide for the army always to heed the directions of the party",
    ]
    .iter()
    .map(|s| words(&s.to_lowercase()))
    .collect();
    let c1 =
        words(&"It is a guide to action which ensures that the military always obeys the commands of the party".to_lowercase());
    let c2 = words(
        &"It is to insure the troops forever hearing the activity guidebook that party direct"
            .to_lowercase(),
    );
    assert_eq!(modified_precision(&c1, &refs, 1), (17, 18));
    assert_eq!(modified_precision(&c1, &refs, 2), (10, 17));
    assert_eq!(modified_precision(&c2, &refs, 1), (8, 14));
    assert_eq!(modified_precision(&c2, &refs, 2), (1, 13));
}

// Source: Lin 2004, "ROUGE: A Package for Automatic Evaluation of Summaries",
// section 3.1: reference S1 "police killed the gunman", candidates S2 "police
// kill the gunman" and S3 "the gunman kill police". S2 and S3 have the same
// ROUGE-2 (one matching bigram, "the gunman", of three), but ROUGE-L is 3/4
// for S2 and 2/4 for S3 (beta = 1; precision and recall are equal here).
#[test]
fn lin_section_3_1_rouge_l_example() {
    let s1 = words("police killed the gunman");
    let s2 = words("police kill the gunman");
    let s3 = words("the gunman kill police");

    let r2_s2 = rouge_n(&s2, &s1, 2);
    let r2_s3 = rouge_n(&s3, &s1, 2);
    assert!(approx(r2_s2.recall, 1.0 / 3.0, 1e-12), "{r2_s2:?}");
    assert!(approx(r2_s3.recall, 1.0 / 3.0, 1e-12), "{r2_s3:?}");
    assert!(approx(r2_s2.f, r2_s3.f, 1e-12));

    let l2 = rouge_l(&s2, &s1);
    let l3 = rouge_l(&s3, &s1);
    for (v, want) in [
        (l2.precision, 0.75),
        (l2.recall, 0.75),
        (l2.f, 0.75),
        (l3.precision, 0.5),
        (l3.recall, 0.5),
        (l3.f, 0.5),
    ] {
        assert!(approx(v, want, 1e-12), "got {v}, want {want}: S2 {l2:?}, S3 {l3:?}");
    }
}

// Source: the textbook example of Levenshtein distance (kitten -> sitting:
// two substitutions and one insertion); value from memory, also in
// tests/data/oracle/fuzzy.jsonl checked against rapidfuzz 3.14.6.
#[test]
fn levenshtein_kitten_sitting_is_3() {
    assert_eq!(levenshtein("kitten", "sitting"), 3);
    assert_eq!(levenshtein("sitting", "kitten"), 3);
    assert!(approx(levenshtein_similarity("kitten", "sitting"), 1.0 - 3.0 / 7.0, 1e-12));
    assert_eq!(levenshtein("", ""), 0);
    assert!(approx(levenshtein_similarity("", ""), 1.0, 0.0));
    // By Unicode scalar values, not bytes: one substitution.
    assert_eq!(levenshtein("café", "cafe"), 1);
}

// Source: Winkler 1990, "String Comparator Metrics and Enhanced Decision Rules
// in the Fellegi-Sunter Model of Record Linkage", table of comparator values
// (Jaro-Winkler MARTHA/MARHTA 0.961, DWAYNE/DUANE 0.840, DIXON/DICKSONX 0.813;
// Jaro 0.944, 0.822, 0.767). Values from memory, to three decimals as
// printed; rapidfuzz 3.14.6 gives 0.96111, 0.84000, 0.81333 for Jaro-Winkler.
#[test]
fn winkler_1990_examples() {
    for (a, b, want_jw, want_j) in [
        ("MARTHA", "MARHTA", 0.961, 0.944),
        ("DWAYNE", "DUANE", 0.840, 0.822),
        ("DIXON", "DICKSONX", 0.813, 0.767),
    ] {
        let jw = jaro_winkler(a, b);
        let j = jaro(a, b);
        assert!(approx(jw, want_jw, 5e-4), "jaro_winkler({a}, {b}) = {jw}, want {want_jw}");
        assert!(approx(j, want_j, 5e-4), "jaro({a}, {b}) = {j}, want {want_j}");
    }
}
