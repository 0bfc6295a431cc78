//! `forebear sign` and the signatures check of `verify`: keys made in the test (from fixed seeds
//! with the ssh-key crate, or by ssh-keygen where it is installed), the demo dossier signed by
//! two people, the signatures checked by forebear and independently by `ssh-keygen -Y verify`,
//! and every way a signature can fail to vouch for the dossier.

use crate::common::{
    analyze, assert_success, bin, exit_code, lossy_stderr, lossy_stdout, reseal, write_demo_csv,
    Scratch,
};
use ssh_key::private::{Ed25519Keypair, KeypairData};
use ssh_key::{LineEnding, PrivateKey};
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

/// The demo data and its dossier (no resampling, for speed) in a fresh folder.
fn dossier(name: &str) -> (Scratch, PathBuf, PathBuf) {
    let scratch = Scratch::new(&format!("signing-{name}"));
    let data = write_demo_csv(&scratch);
    assert_success(&analyze(&scratch, &data, "crush_strength", &["--quiet"]));
    let out = scratch.path("out");
    (scratch, data, out)
}

/// An Ed25519 key from a fixed seed, with `comment`.
fn seeded_key(seed: u8, comment: &str) -> PrivateKey {
    let pair = Ed25519Keypair::from_seed(&[seed; 32]);
    PrivateKey::new(KeypairData::Ed25519(pair), comment).unwrap()
}

/// Writes `key` in the OpenSSH format to `dir/name`; returns the path.
fn write_key(dir: &Path, name: &str, key: &PrivateKey) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, key.to_openssh(LineEnding::LF).unwrap().as_bytes()).unwrap();
    path
}

/// `key-type base64` of a key's public half.
fn public_line(key: &PrivateKey) -> String {
    let mut public = key.public_key().clone();
    public.set_comment("");
    public.to_openssh().unwrap().trim().to_string()
}

/// `forebear sign DIR --key KEY --meaning MEANING EXTRA…`.
fn sign(dir: &Path, key: &Path, meaning: &str, extra: &[&str]) -> Output {
    bin()
        .arg("sign")
        .arg(dir)
        .arg("--key")
        .arg(key)
        .args(["--meaning", meaning])
        .args(extra)
        .output()
        .unwrap()
}

/// `forebear --quiet verify DIR --data DATA EXTRA…`: exit code and stdout.
fn verify(dir: &Path, data: &Path, extra: &[&str]) -> (i32, String) {
    let output = crate::common::verify(dir, data, extra);
    let stderr = lossy_stderr(&output);
    assert!(!stderr.contains("panicked"), "{stderr}");
    (exit_code(&output), lossy_stdout(&output))
}

/// The details of the signatures check in a text report, one line.
fn signatures_block(report: &str) -> String {
    let mut lines = report.lines().skip_while(|l| !l.starts_with("signatures "));
    let head = lines
        .next()
        .unwrap_or_else(|| panic!("no signatures check: {report}"));
    let body: Vec<&str> = lines.take_while(|l| l.starts_with("    ")).collect();
    format!("{head}\n{}", body.join("\n"))
}

/// Asserts a verification ended in a mismatch (exit 1) whose signatures check failed saying
/// `needle`.
fn assert_signature_mismatch(dir: &Path, data: &Path, extra: &[&str], needle: &str) {
    let (code, report) = verify(dir, data, extra);
    assert_eq!(code, 1, "{report}");
    assert_eq!(report.lines().last(), Some("MISMATCH"), "{report}");
    let block = signatures_block(&report);
    assert!(block.starts_with("signatures     MISMATCH"), "{block}");
    assert!(block.contains(needle), "{needle:?} expected in:\n{block}");
}

/// Asserts a refusal: exit 2, one error line saying each of `needles`, nothing written to
/// `signatures/` of `dir` beyond `before`.
fn assert_refused(output: &Output, needles: &[&str]) {
    let stderr = lossy_stderr(output);
    assert_eq!(exit_code(output), 2, "{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    for needle in needles {
        assert!(stderr.contains(needle), "{needle:?} expected in: {stderr}");
    }
}

fn signature_files(dir: &Path) -> Vec<String> {
    forebear::sign::signature_folder_names(dir).unwrap()
}

/// Dana prepares and Rui reviews the dossier in `out` with two seeded keys; returns both keys.
fn sign_twice(scratch: &Scratch, out: &Path) -> (PrivateKey, PrivateKey) {
    let dana = seeded_key(1, "Dana Analyst");
    let rui = seeded_key(2, "rui@lab.example");
    let prepared = sign(out, &write_key(scratch, "dana", &dana), "prepared", &[]);
    assert_success(&prepared);
    let said = lossy_stdout(&prepared);
    assert!(
        said.contains("signed by Dana Analyst: prepared: I prepared this dossier"),
        "{said}"
    );
    let reviewed = sign(
        out,
        &write_key(scratch, "rui", &rui),
        "reviewed",
        &["--signer", "Rui Reviewer"],
    );
    assert_success(&reviewed);
    (dana, rui)
}

#[test]
fn two_signers_prepare_and_review_the_demo_and_verify_lists_both() {
    let (scratch, data, out) = dossier("two");
    let (dana, rui) = sign_twice(&scratch, &out);
    assert_eq!(
        signature_files(&out),
        [
            "1-prepared.json",
            "1-prepared.json.sig",
            "2-reviewed.json",
            "2-reviewed.json.sig"
        ]
    );
    // Nothing is left beside the dossier but what was there and the audit trail, whose last two
    // entries record the two signings.
    assert_eq!(
        scratch.entries(),
        [
            "dana",
            "filter_discs.csv",
            "forebear-trail.jsonl",
            "out",
            "rui"
        ]
    );
    let trail = std::fs::read_to_string(scratch.path("forebear-trail.jsonl")).unwrap();
    let entries: Vec<serde_json::Value> = trail
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    let [.., first, second] = entries.as_slice() else {
        panic!("two signing entries expected in:\n{trail}");
    };
    assert_eq!(first["action"], "sign");
    assert_eq!(first["facts"]["signer"], "Dana Analyst");
    assert_eq!(first["facts"]["meaning"], "prepared");
    assert_eq!(first["facts"]["statement"], "signatures/1-prepared.json");
    assert_eq!(second["action"], "sign");
    assert_eq!(second["facts"]["signer"], "Rui Reviewer");
    assert_eq!(second["previous"], first["hash"]);
    let shown = bin().arg("trail").arg(scratch.path("")).output().unwrap();
    assert_success(&shown);
    let statement: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("signatures/2-reviewed.json")).unwrap())
            .unwrap();
    let manifest = std::fs::read(out.join("manifest.json")).unwrap();
    assert_eq!(statement["schema"], "forebear.signature/1");
    assert_eq!(statement["signer"], "Rui Reviewer");
    assert_eq!(statement["meaning"], "reviewed");
    assert_eq!(
        statement["declaration"],
        "reviewed: I reviewed this dossier"
    );
    assert_eq!(
        statement["dossier"]["manifest_sha256"],
        crate::common::sha256_hex(&manifest)
    );
    assert_eq!(statement["dossier"]["target"], "crush_strength");
    let rui_fingerprint = forebear::sign::fingerprint(rui.public_key().key_data());
    assert_eq!(statement["key"]["fingerprint"], rui_fingerprint.as_str());
    let signed_utc = statement["signed_utc"].as_str().unwrap();
    assert!(
        signed_utc.len() == 20 && signed_utc.ends_with('Z') && &signed_utc[10..11] == "T",
        "{signed_utc}"
    );
    let armour = std::fs::read_to_string(out.join("signatures/2-reviewed.json.sig")).unwrap();
    assert!(
        armour.starts_with("-----BEGIN SSH SIGNATURE-----\n"),
        "{armour}"
    );

    let (code, report) = verify(&out, &data, &[]);
    assert_eq!(code, 0, "{report}");
    let block = signatures_block(&report);
    let dana_fingerprint = forebear::sign::fingerprint(dana.public_key().key_data());
    for needle in [
        "signatures     ok",
        "signatures/1-prepared.json: prepared by 'Dana Analyst' at ",
        &format!("key {dana_fingerprint}: valid"),
        &format!("signatures/2-reviewed.json: reviewed by 'Rui Reviewer' at {signed_utc}"),
        &format!("key {rui_fingerprint}: valid"),
    ] {
        assert!(block.contains(needle), "{needle:?} expected in:\n{block}");
    }
    // An allowed-signers file listing both (a name with a space in quotes) makes no difference.
    let signers = scratch.write(
        "allowed_signers",
        format!(
            "# who may sign\n\"Dana Analyst\" {}\nRui*,qa namespaces=\"forebear-dossier\" {}\n",
            public_line(&dana),
            public_line(&rui)
        ),
    );
    let signers_arg = signers.to_str().unwrap();
    let (code, report) = verify(&out, &data, &["--signers", signers_arg, "--json"]);
    assert_eq!(code, 0, "{report}");
    let json: serde_json::Value = serde_json::from_str(&report).unwrap();
    let listed = json["signatures"].as_array().unwrap();
    assert_eq!(listed.len(), 2);
    assert_eq!(listed[0]["signer"], "Dana Analyst");
    assert_eq!(listed[0]["meaning"], "prepared");
    assert_eq!(listed[0]["fingerprint"], dana_fingerprint.as_str());
    assert_eq!(listed[1]["signed_utc"], signed_utc);
    assert!(listed.iter().all(|s| s["status"] == "valid"), "{report}");
}

/// `ssh-keygen` if it runs here; otherwise a note on stderr and `None`.
fn ssh_keygen() -> Option<&'static str> {
    let found = Command::new("ssh-keygen")
        .arg("-?")
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .is_ok();
    if !found {
        eprintln!("note: ssh-keygen is not installed; the independent check is skipped");
    }
    found.then_some("ssh-keygen")
}

#[test]
fn ssh_keygen_accepts_forebear_signatures_and_forebear_accepts_ssh_keygen_signatures() {
    let Some(keygen) = ssh_keygen() else {
        return;
    };
    let (scratch, data, out) = dossier("keygen");
    let key = scratch.path("quinn");
    let made = Command::new(keygen)
        .args([
            "-q",
            "-t",
            "ed25519",
            "-N",
            "",
            "-C",
            "Quinn Approver",
            "-f",
        ])
        .arg(&key)
        .status()
        .unwrap();
    assert!(made.success());
    assert_success(&sign(&out, &key, "approved", &[]));
    let public = std::fs::read_to_string(key.with_extension("pub")).unwrap();
    let key_fields: Vec<&str> = public.split_whitespace().take(2).collect();
    let signers = scratch.write(
        "allowed_signers",
        format!("\"Quinn Approver\" {}\n", key_fields.join(" ")),
    );
    let statement = out.join("signatures/1-approved.json");
    let keygen_verify = |statement: &Path, signature: &Path| {
        Command::new(keygen)
            .args(["-Y", "verify", "-f"])
            .arg(&signers)
            .args(["-I", "Quinn Approver", "-n", "forebear-dossier", "-s"])
            .arg(signature)
            .stdin(std::fs::File::open(statement).unwrap())
            .output()
            .unwrap()
    };
    let checked = keygen_verify(&statement, &statement.with_extension("json.sig"));
    assert!(
        checked.status.success(),
        "{}",
        String::from_utf8_lossy(&checked.stderr)
    );
    assert!(
        String::from_utf8_lossy(&checked.stdout).contains("Good \"forebear-dossier\" signature")
    );
    // ssh-keygen refuses a statement changed by one byte, as forebear does.
    let forged = scratch.write(
        "forged.json",
        std::fs::read_to_string(&statement)
            .unwrap()
            .replace("approved", "reviewed"),
    );
    assert!(
        !keygen_verify(&forged, &statement.with_extension("json.sig"))
            .status
            .success()
    );
    // A signature that ssh-keygen made of the statement is one forebear accepts.
    let own = scratch.path("by-keygen.json");
    std::fs::copy(&statement, &own).unwrap();
    let signed = Command::new(keygen)
        .args(["-Y", "sign", "-n", "forebear-dossier", "-f"])
        .arg(&key)
        .arg(&own)
        .stderr(Stdio::null())
        .status()
        .unwrap();
    assert!(signed.success());
    std::fs::copy(
        own.with_extension("json.sig"),
        statement.with_extension("json.sig"),
    )
    .unwrap();
    let (code, report) = verify(&out, &data, &["--signers", signers.to_str().unwrap()]);
    assert_eq!(code, 0, "{report}");
    assert!(signatures_block(&report).contains("approved by 'Quinn Approver'"));
}

#[test]
fn a_statement_edited_by_one_byte_fails_its_signature() {
    let (scratch, data, out) = dossier("edited-statement");
    sign_twice(&scratch, &out);
    let path = out.join("signatures/1-prepared.json");
    let text = std::fs::read_to_string(&path).unwrap();
    std::fs::write(&path, text.replacen("Dana Analyst", "Dana Analysd", 1)).unwrap();
    assert_signature_mismatch(
        &out,
        &data,
        &[],
        "signatures/1-prepared.json: prepared by 'Dana Analysd'",
    );
    assert_signature_mismatch(
        &out,
        &data,
        &[],
        "INVALID: its signature 1-prepared.json.sig does not hold",
    );
    // The other signature is still reported valid.
    assert_signature_mismatch(&out, &data, &[], "reviewed by 'Rui Reviewer'");
}

#[test]
fn a_signature_copied_from_another_dossier_is_about_another_dossier() {
    let (scratch, data, out) = dossier("copied");
    let other = scratch.path("other");
    let analysed = bin()
        .args(["--quiet", "analyze"])
        .arg(&data)
        .args([
            "--target",
            "crush_strength",
            "--replicates",
            "0",
            "--seed",
            "7",
            "--out",
        ])
        .arg(&other)
        .output()
        .unwrap();
    assert_success(&analysed);
    let key = write_key(&scratch, "dana", &seeded_key(1, "Dana Analyst"));
    assert_success(&sign(&other, &key, "approved", &[]));
    std::fs::create_dir(out.join("signatures")).unwrap();
    for name in ["1-approved.json", "1-approved.json.sig"] {
        std::fs::copy(
            other.join("signatures").join(name),
            out.join("signatures").join(name),
        )
        .unwrap();
    }
    assert_signature_mismatch(
        &out,
        &data,
        &[],
        "ANOTHER DOSSIER: is about another dossier: it signs a manifest.json with SHA-256",
    );
}

#[test]
fn a_dossier_edited_after_signing_no_longer_verifies() {
    let (scratch, data, out) = dossier("edited-dossier");
    sign_twice(&scratch, &out);
    let page = out.join("dossier.md");
    let text = std::fs::read_to_string(&page).unwrap();
    std::fs::write(&page, text.replacen("crush_strength", "crush_strengtH", 1)).unwrap();
    let (code, report) = verify(&out, &data, &[]);
    assert_eq!(code, 1, "{report}");
    assert!(
        report.contains("dossier.md was edited after generation"),
        "{report}"
    );
    // Re-sealed with every hash recomputed, the manifest is another one: no signature holds for it.
    reseal(&out, |_| {});
    assert_signature_mismatch(&out, &data, &[], "is about another dossier");
}

#[test]
fn signers_file_without_the_key_or_for_another_principal_is_a_mismatch() {
    let (scratch, data, out) = dossier("signers");
    let (dana, _rui) = sign_twice(&scratch, &out);
    let only_dana = scratch.write(
        "only_dana",
        format!("\"Dana Analyst\" {}\n", public_line(&dana)),
    );
    assert_signature_mismatch(
        &out,
        &data,
        &["--signers", only_dana.to_str().unwrap()],
        "NOT ALLOWED: its key SHA256:",
    );
    // Dana's key listed for another person only: her signature is not allowed either.
    let other_name = scratch.write(
        "other_name",
        format!("\"Rui Reviewer\",qa {}\n", public_line(&dana)),
    );
    assert_signature_mismatch(
        &out,
        &data,
        &["--signers", other_name.to_str().unwrap()],
        "lists its key",
    );
    assert_signature_mismatch(
        &out,
        &data,
        &["--signers", other_name.to_str().unwrap()],
        "for other principals than 'Dana Analyst' (line 1: Rui Reviewer,qa)",
    );
}

#[test]
fn an_unsigned_dossier_is_a_note_and_with_signers_a_mismatch() {
    let (scratch, data, out) = dossier("unsigned");
    let (code, report) = verify(&out, &data, &[]);
    assert_eq!(code, 0, "{report}");
    let block = signatures_block(&report);
    assert!(block.starts_with("signatures     ok (note)"), "{block}");
    assert!(block.contains("not signed"), "{block}");
    let signers = scratch.write(
        "allowed_signers",
        format!("qa {}\n", public_line(&seeded_key(3, ""))),
    );
    assert_signature_mismatch(
        &out,
        &data,
        &["--signers", signers.to_str().unwrap()],
        "not signed, but --signers asks for signatures",
    );
}

#[test]
fn a_bad_signers_file_is_refused_naming_file_and_line() {
    let (scratch, data, out) = dossier("bad-signers");
    let key = public_line(&seeded_key(1, ""));
    for (text, needle) in [
        (
            format!("# ok\n\nqa {key}\nqb\n"),
            "bad_signers, line 4: a principal without a key",
        ),
        (
            format!("qa valid-after=\"20260101\" {key}\n"),
            "bad_signers, line 1: forebear does not read the option valid-after",
        ),
        (
            "qa ssh-ed25519 AAAAC3Nz\n".to_string(),
            "bad_signers, line 1: no public key",
        ),
    ] {
        let signers = scratch.write("bad_signers", text);
        let output = crate::common::verify(&out, &data, &["--signers", signers.to_str().unwrap()]);
        assert_refused(&output, &[needle]);
    }
    let missing = scratch.path("absent_signers");
    let output = crate::common::verify(&out, &data, &["--signers", missing.to_str().unwrap()]);
    assert_refused(
        &output,
        &[
            "the allowed-signers file",
            "absent_signers",
            "cannot be read",
        ],
    );
}

#[test]
fn stray_files_in_the_signatures_folder_fail_verify_and_stop_sign() {
    let (scratch, data, out) = dossier("stray");
    let key = write_key(&scratch, "dana", &seeded_key(1, "Dana Analyst"));
    assert_success(&sign(&out, &key, "prepared", &[]));
    std::fs::write(out.join("signatures/readme.txt"), "mine\n").unwrap();
    std::fs::write(out.join("signatures/5-approved.json.sig"), "").unwrap();
    assert_signature_mismatch(
        &out,
        &data,
        &[],
        "'signatures/readme.txt' is in the signatures folder but is no signature",
    );
    assert_signature_mismatch(
        &out,
        &data,
        &[],
        "'signatures/5-approved.json.sig' is a signature without its statement",
    );
    let before = signature_files(&out);
    assert_refused(
        &sign(&out, &key, "reviewed", &[]),
        &["holds 'readme.txt', which is no signature; move it away before signing"],
    );
    assert_eq!(signature_files(&out), before);
    // `analyze --force` refuses to delete a file it did not write.
    let forced = analyze(&scratch, &data, "crush_strength", &["--quiet", "--force"]);
    assert_refused(&forced, &["signatures/readme.txt"]);
}

#[test]
fn a_new_signature_takes_the_next_number_and_replaces_none() {
    let (scratch, data, out) = dossier("numbers");
    let dana = write_key(&scratch, "dana", &seeded_key(1, "Dana Analyst"));
    assert_success(&sign(&out, &dana, "prepared", &[]));
    let first = std::fs::read(out.join("signatures/1-prepared.json")).unwrap();
    assert_success(&sign(&out, &dana, "prepared", &[]));
    assert_success(&sign(&out, &dana, "approved", &[]));
    assert_eq!(
        signature_files(&out),
        [
            "1-prepared.json",
            "1-prepared.json.sig",
            "2-prepared.json",
            "2-prepared.json.sig",
            "3-approved.json",
            "3-approved.json.sig"
        ]
    );
    assert_eq!(
        std::fs::read(out.join("signatures/1-prepared.json")).unwrap(),
        first
    );
    let (code, report) = verify(&out, &data, &[]);
    assert_eq!(code, 0, "{report}");
    // The whole dossier may be replaced, its signatures with it.
    let forced = analyze(&scratch, &data, "crush_strength", &["--quiet", "--force"]);
    assert_success(&forced);
    assert!(!out.join("signatures").exists());
}

#[test]
fn keys_and_folders_that_cannot_sign_are_refused_with_exit_2() {
    let (scratch, _data, out) = dossier("refusals");
    let anonymous = write_key(&scratch, "anonymous", &seeded_key(4, ""));
    assert_refused(
        &sign(&out, &anonymous, "prepared", &[]),
        &["has no comment to take the signer's name from", "--signer"],
    );
    assert_refused(
        &sign(&out, &anonymous, "prepared", &["--signer", "Dana, Analyst"]),
        &["a double quote or a comma"],
    );
    assert_refused(
        &sign(
            &out,
            &scratch.path("absent"),
            "prepared",
            &["--signer", "x"],
        ),
        &["the key file", "absent", "cannot be read"],
    );
    let public = scratch.write("dana.pub", public_line(&seeded_key(1, "")) + "\n");
    assert_refused(
        &sign(&out, &public, "prepared", &["--signer", "x"]),
        &["holds a public key; give the private key file"],
    );
    let garbage = scratch.write("garbage", "not a key\n");
    assert_refused(
        &sign(&out, &garbage, "prepared", &["--signer", "x"]),
        &["is not a private key in the OpenSSH format"],
    );
    let bad_meaning = sign(&out, &anonymous, "witnessed", &["--signer", "x"]);
    assert_eq!(exit_code(&bad_meaning), 2);
    // Not a dossier: an empty folder, a file, a dossier whose manifest was edited.
    let empty = scratch.path("empty");
    std::fs::create_dir(&empty).unwrap();
    assert_refused(
        &sign(&empty, &anonymous, "prepared", &["--signer", "x"]),
        &["cannot be signed", "manifest.json cannot be read"],
    );
    let page = out.join("dossier.md");
    let text = std::fs::read_to_string(&page).unwrap();
    std::fs::write(&page, text.replacen("crush_strength", "crush_strengtH", 1)).unwrap();
    assert_refused(
        &sign(&out, &anonymous, "prepared", &["--signer", "x"]),
        &["dossier.md was edited after generation"],
    );
    std::fs::write(&page, text).unwrap();
    let manifest = out.join("manifest.json");
    let text = std::fs::read_to_string(&manifest).unwrap();
    std::fs::write(&manifest, text.replacen("\"seed\": 1", "\"seed\": 2", 1)).unwrap();
    assert_refused(
        &sign(&out, &anonymous, "prepared", &["--signer", "x"]),
        &["manifest.json was edited after generation (its seal does not hold)"],
    );
    assert!(!out.join("signatures").exists());
    // Another key type, where ssh-keygen can make one.
    if let Some(keygen) = ssh_keygen() {
        let rsa = scratch.path("rsa");
        let made = Command::new(keygen)
            .args([
                "-q", "-t", "rsa", "-b", "2048", "-N", "", "-C", "Dana", "-f",
            ])
            .arg(&rsa)
            .status()
            .unwrap();
        assert!(made.success());
        std::fs::write(&manifest, &text).unwrap();
        assert_refused(
            &sign(&out, &rsa, "prepared", &[]),
            &["is a ssh-rsa key; forebear signs only with Ed25519 keys"],
        );
    }
}

#[test]
fn a_passphrase_protected_key_signs_only_with_its_passphrase_file() {
    let (scratch, data, out) = dossier("passphrase");
    let key = seeded_key(5, "Dana Analyst")
        .encrypt(&mut rand_core_06::OsRng, "correct horse")
        .unwrap();
    let key = write_key(&scratch, "dana", &key);
    assert_refused(
        &sign(&out, &key, "prepared", &[]),
        &["is protected by a passphrase", "--passphrase-file FILE"],
    );
    let wrong = scratch.write("wrong", "battery staple\n");
    let refused = sign(
        &out,
        &key,
        "prepared",
        &["--passphrase-file", wrong.to_str().unwrap()],
    );
    assert_refused(&refused, &["does not open the key"]);
    assert!(!lossy_stderr(&refused).contains("battery"));
    assert!(!out.join("signatures").exists());
    let right = scratch.write("right", "correct horse\n");
    let signed = sign(
        &out,
        &key,
        "prepared",
        &["--passphrase-file", right.to_str().unwrap()],
    );
    assert_success(&signed);
    assert!(!lossy_stdout(&signed).contains("correct horse"));
    let (code, report) = verify(&out, &data, &[]);
    assert_eq!(code, 0, "{report}");
    assert!(signatures_block(&report).contains("prepared by 'Dana Analyst'"));
}
