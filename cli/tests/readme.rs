//! The README's command-line section: every file a command reads is one that an earlier command in
//! the section writes, so the section runs as written from an empty folder.
mod common;

use std::collections::HashSet;

/// The `finespike …` lines of the README's "Use from the command line" section, as token lists.
fn readme_commands() -> Vec<Vec<String>> {
    let path = common::refdata().join("../../README.md");
    let text = std::fs::read_to_string(&path).expect("README.md at the workspace root");
    let start = text
        .find("## Use from the command line")
        .expect("command-line section");
    let section = &text[start..];
    let end = section[3..].find("\n## ").map_or(section.len(), |i| i + 3);
    section[..end]
        .lines()
        .map(|l| l.split('#').next().unwrap_or("").trim())
        .filter(|l| l.starts_with("finespike "))
        .map(|l| l.split_whitespace().map(str::to_string).collect())
        .collect()
}

/// The value after `flag` (or its short form) in a command.
fn values<'a>(cmd: &'a [String], flags: &[&str]) -> Vec<&'a str> {
    cmd.windows(2)
        .filter(|w| flags.contains(&w[0].as_str()))
        .map(|w| w[1].as_str())
        .collect()
}

#[test]
fn readme_commands_read_only_files_that_earlier_commands_write() {
    let commands = readme_commands();
    assert!(commands.len() >= 8, "{commands:?}");
    let mut written: HashSet<String> = HashSet::new();
    for cmd in &commands {
        let sub = cmd[1].as_str();
        let mut read = values(cmd, &["--input", "-i", "--data"]);
        if sub != "simulate" {
            read.extend(values(cmd, &["--truth", "-t"]));
        }
        for file in read {
            assert!(
                written.contains(file),
                "`{}` reads {file}, which no earlier command of the README writes",
                cmd.join(" ")
            );
        }
        written.extend(values(cmd, &["--out", "-o"]).into_iter().map(String::from));
        if sub == "simulate" {
            written.extend(values(cmd, &["--truth"]).into_iter().map(String::from));
        }
    }
}
