//! Writing a report file whole: the text goes to a temporary file beside the
//! target, which is then renamed, so a failure never leaves half a file.

use crate::error::{Error, Result};
use std::path::Path;

/// Write `text` to `path` (created or replaced) or fail with a message
/// naming the file (bad input, exit code 2: the user chose the path).
pub fn write_whole(path: &Path, text: &str) -> Result<()> {
    let name = path.display();
    let file_name = path
        .file_name()
        .ok_or_else(|| Error::input(format!("cannot write \"{name}\": not a file name")))?;
    let mut tmp_name = std::ffi::OsString::from(".");
    tmp_name.push(file_name);
    tmp_name.push(".part");
    let tmp = path.with_file_name(tmp_name);
    std::fs::write(&tmp, text)
        .map_err(|e| Error::input(format!("cannot write \"{name}\": {e}")))?;
    std::fs::rename(&tmp, path).map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        Error::input(format!("cannot write \"{name}\": {e}"))
    })
}
