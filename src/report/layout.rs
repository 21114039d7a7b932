//! The results JSON's layout: indented two spaces down to a model's lists,
//! and each record in those lists (a coefficient, a check, a residual row,
//! a forecast row) on one line, so that a million-row file stays a third
//! smaller than fully indented JSON and still reads one record per line.

use std::io::{self, Write};

use serde_json::ser::Formatter;

/// Containers nested this deep or deeper are written on one line: the
/// root object, `models`, one model, its list, then the record.
const ONE_LINE_FROM: usize = 5;

/// A [`Formatter`] that indents the outer levels and writes records whole.
#[derive(Debug, Default)]
pub struct RecordLayout {
    /// Containers open.
    depth: usize,
    /// Whether the innermost open container holds a value yet.
    has_value: bool,
}

impl RecordLayout {
    /// Whether the contents of a container at `depth` are indented.
    fn indented(depth: usize) -> bool {
        depth < ONE_LINE_FROM
    }

    fn new_line<W: ?Sized + Write>(&self, writer: &mut W, depth: usize) -> io::Result<()> {
        writer.write_all(b"\n")?;
        for _ in 0..depth {
            writer.write_all(b"  ")?;
        }
        Ok(())
    }

    fn open<W: ?Sized + Write>(&mut self, writer: &mut W, bracket: &[u8]) -> io::Result<()> {
        self.depth += 1;
        self.has_value = false;
        writer.write_all(bracket)
    }

    fn close<W: ?Sized + Write>(&mut self, writer: &mut W, bracket: &[u8]) -> io::Result<()> {
        self.depth -= 1;
        if self.has_value && Self::indented(self.depth + 1) {
            self.new_line(writer, self.depth)?;
        }
        writer.write_all(bracket)
    }

    fn item<W: ?Sized + Write>(&mut self, writer: &mut W, first: bool) -> io::Result<()> {
        if !first {
            writer.write_all(b",")?;
        }
        if Self::indented(self.depth) {
            self.new_line(writer, self.depth)?;
        } else if !first {
            writer.write_all(b" ")?;
        }
        Ok(())
    }
}

impl Formatter for RecordLayout {
    fn begin_array<W: ?Sized + Write>(&mut self, writer: &mut W) -> io::Result<()> {
        self.open(writer, b"[")
    }

    fn end_array<W: ?Sized + Write>(&mut self, writer: &mut W) -> io::Result<()> {
        self.close(writer, b"]")
    }

    fn begin_array_value<W: ?Sized + Write>(
        &mut self,
        writer: &mut W,
        first: bool,
    ) -> io::Result<()> {
        self.item(writer, first)
    }

    fn end_array_value<W: ?Sized + Write>(&mut self, _writer: &mut W) -> io::Result<()> {
        self.has_value = true;
        Ok(())
    }

    fn begin_object<W: ?Sized + Write>(&mut self, writer: &mut W) -> io::Result<()> {
        self.open(writer, b"{")
    }

    fn end_object<W: ?Sized + Write>(&mut self, writer: &mut W) -> io::Result<()> {
        self.close(writer, b"}")
    }

    fn begin_object_key<W: ?Sized + Write>(
        &mut self,
        writer: &mut W,
        first: bool,
    ) -> io::Result<()> {
        self.item(writer, first)
    }

    fn begin_object_value<W: ?Sized + Write>(&mut self, writer: &mut W) -> io::Result<()> {
        writer.write_all(b": ")
    }

    fn end_object_value<W: ?Sized + Write>(&mut self, _writer: &mut W) -> io::Result<()> {
        self.has_value = true;
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn layout(value: &serde_json::Value) -> String {
        let mut out = Vec::new();
        let mut serializer =
            serde_json::Serializer::with_formatter(&mut out, RecordLayout::default());
        serde::Serialize::serialize(value, &mut serializer).unwrap();
        String::from_utf8(out).unwrap()
    }

    #[test]
    fn records_in_a_models_lists_take_one_line_each() {
        // The keys of a `serde_json::Value` come out sorted.
        let value = serde_json::json!({
            "title": "t",
            "models": [{
                "name": "m",
                "fit": {"r_squared": 0.5},
                "residuals": [{"row": 2, "flags": []}, {"row": 3, "flags": ["leverage"]}],
                "forecast": []
            }]
        });
        let text = layout(&value);
        assert_eq!(
            text,
            r#"{
  "models": [
    {
      "fit": {
        "r_squared": 0.5
      },
      "forecast": [],
      "name": "m",
      "residuals": [
        {"flags": [], "row": 2},
        {"flags": ["leverage"], "row": 3}
      ]
    }
  ],
  "title": "t"
}"#
        );
        let back: serde_json::Value = serde_json::from_str(&text).unwrap();
        assert_eq!(back, value);
    }
}
