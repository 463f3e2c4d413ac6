"""End to end: damage on disk after a SIGKILL. A journal segment cut short or followed by garbage
(a torn tail: cut at the last whole record, logged as journal_tail_cut), and a damaged newest
snapshot (skipped for the older one, logged as snapshot_skipped)."""

import os
import unittest

from e2e_harness import (Daemon, check_binaries, check_matching_in_graph, gen_stream, log_fields,
                         networkx_weight, replay_commits, replay_final_matching, rng, scaled,
                         segment_records)


class JournalTailTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def stream_then_kill(self, seed):
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "stream.txt")
        script = gen_stream(path, "city", scaled(200, 80), scaled(3000, 600), 20, seed=seed,
                            extra=("--mix", "test"))
        daemon.yoke("send", path, "--in-flight", "3")
        before = daemon.summary()
        self.assertEqual(before["seq"], len(script.batches))
        daemon.kill()
        return daemon, script, before

    def check_equals_replay(self, daemon):
        """The restarted daemon against `yoke replay DATA_DIR` of the journal as it is now."""
        summary = daemon.summary()
        replay_pairs, commits = replay_final_matching(daemon.data_dir)
        self.assertEqual((summary["seq"], summary["weight"], summary["pairs"]),
                         (commits[-1]["seq"], commits[-1]["weight"], commits[-1]["pairs"]))
        seq, weight, pairs = daemon.matching()
        self.assertEqual(pairs, replay_pairs)
        return summary

    def tail_cut_line(self, daemon):
        lines = daemon.log_lines("journal_tail_cut")
        self.assertEqual(len(lines), 1, daemon.log_text())
        return log_fields(lines[0])

    def test_truncated_last_record(self):
        daemon, script, before = self.stream_then_kill(seed=61)
        segment = daemon.journal_segments()[-1]
        records, size = segment_records(segment)
        last_offset, last_length, _ = records[-1]
        # The records fill the file exactly (daemon/journal/FORMAT.md: nothing after the last).
        self.assertEqual(last_offset + 16 + last_length, size)
        cut = 5
        os.truncate(segment, size - cut)

        daemon.start()
        fields = self.tail_cut_line(daemon)
        # FORMAT.md: the file is cut just before the first record that fails.
        self.assertEqual(os.path.basename(fields["segment"]), os.path.basename(segment))
        self.assertEqual(int(fields["offset"]), last_offset)
        self.assertEqual(int(fields["bytes"]), 16 + last_length - cut)
        self.assertEqual(os.path.getsize(segment), last_offset)
        summary = self.check_equals_replay(daemon)
        # The last record held the last batch: the pool is one batch behind.
        self.assertEqual(summary["seq"], before["seq"] - 1)
        # Oracle: NetworkX on the graph of every batch but the last.
        self.assertEqual(summary["weight"],
                         networkx_weight(script.graph(upto=len(script.batches) - 1)))
        # The daemon goes on from there: the lost batch sent again is applied.
        tail = script.suffix(len(script.batches) - 1).write(os.path.join(daemon.dir, "tail.txt"))
        daemon.yoke("send", tail.path)
        self.assertEqual(daemon.summary(), before)

    def test_garbage_after_last_record(self):
        daemon, script, before = self.stream_then_kill(seed=62)
        segment = daemon.journal_segments()[-1]
        size = os.path.getsize(segment)
        garbage = bytes(rng(62).randrange(256) for _ in range(37))
        with open(segment, "ab") as out:
            out.write(garbage)

        daemon.start()
        fields = self.tail_cut_line(daemon)
        self.assertEqual(int(fields["offset"]), size)
        self.assertEqual(int(fields["bytes"]), len(garbage))
        self.assertEqual(os.path.getsize(segment), size)
        summary = self.check_equals_replay(daemon)
        # Nothing acknowledged was lost.
        self.assertEqual(summary, before)
        self.assertEqual(summary["weight"], networkx_weight(script.graph()))

    def test_record_header_of_zeros_after_last_record(self):
        # A crash between growing the file and writing the record: zero bytes at the end.
        daemon, script, before = self.stream_then_kill(seed=63)
        segment = daemon.journal_segments()[-1]
        size = os.path.getsize(segment)
        with open(segment, "ab") as out:
            out.write(bytes(40))
        daemon.start()
        fields = self.tail_cut_line(daemon)
        self.assertEqual(int(fields["offset"]), size)
        self.assertEqual(self.check_equals_replay(daemon), before)

    def test_damaged_newest_snapshot_falls_back(self):
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "stream.txt")
        script = gen_stream(path, "city", scaled(200, 80), scaled(3000, 600), 20, seed=64)
        third = len(script.batches) // 3
        parts = [script.prefix(third), script.suffix(third).prefix(third),
                 script.suffix(2 * third)]
        taken = []
        for index, part in enumerate(parts):
            daemon.yoke("send", part.write(os.path.join(daemon.dir, f"part{index}.txt")).path)
            if index < 2:
                taken.append(daemon.yoke_json("query", "snapshot"))
        before = daemon.summary()
        daemon.kill()

        snapshots = daemon.snapshot_files()
        self.assertEqual([os.path.basename(p) for p in snapshots],
                         [os.path.basename(t["path"]) for t in taken])
        newest = snapshots[-1]
        with open(newest, "r+b") as snapshot:
            data = bytearray(snapshot.read())
            for offset in (len(data) // 3, len(data) // 2, 2 * len(data) // 3):
                data[offset] ^= 0x5A
            snapshot.seek(0)
            snapshot.write(data)

        daemon.start()
        self.assertEqual(len(daemon.log_lines("snapshot_skipped")), 1, daemon.log_text())
        older = int(os.path.basename(snapshots[0]).split("-")[1].split(".")[0])
        self.assertIn(f"snapshot_position={older}", daemon.log_lines("recovered")[-1])
        summary = daemon.summary()
        self.assertEqual(summary, before)
        # Reference: the journal replayed from the start ends at the same seq and weight (the
        # pairs may differ where weights tie: the daemon went on from a restored snapshot).
        commits = replay_commits(daemon.data_dir)
        self.assertEqual((summary["seq"], summary["weight"]),
                         (commits[-1]["seq"], commits[-1]["weight"]))
        # Oracle: NetworkX on the final graph.
        self.assertEqual(summary["weight"], networkx_weight(script.graph()))
        seq, weight, pairs = daemon.matching()
        check_matching_in_graph(self, pairs, script.graph(), weight)

    def test_both_snapshots_damaged_falls_back_to_the_journal(self):
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "stream.txt")
        script = gen_stream(path, "city", scaled(150, 60), scaled(2000, 400), 20, seed=65)
        half = len(script.batches) // 2
        for index, part in enumerate((script.prefix(half), script.suffix(half))):
            daemon.yoke("send", part.write(os.path.join(daemon.dir, f"part{index}.txt")).path)
            daemon.yoke("query", "snapshot")
        before = daemon.summary()
        before_matching = daemon.matching()
        daemon.kill()
        snapshots = daemon.snapshot_files()
        self.assertEqual(len(snapshots), 2)
        for snapshot in snapshots:  # one cut short, one without its end marker
            size = os.path.getsize(snapshot)
            os.truncate(snapshot, size - (100 if snapshot == snapshots[0] else 8))

        daemon.start()
        self.assertEqual(len(daemon.log_lines("snapshot_skipped")), 2, daemon.log_text())
        self.assertIn("snapshot_position=none", daemon.log_lines("recovered")[-1])
        # From the journal alone, the daemon commits where it did before: the same pairs.
        self.assertEqual(daemon.summary(), before)
        self.assertEqual(daemon.matching(), before_matching)
        self.assertEqual(before["weight"], networkx_weight(script.graph()))

    def big_journal(self, daemon):
        """Two batches of 60000 edges each: with 1 MiB segments each record gets a segment of its
        own (FORMAT.md: a new segment before a record that would take a full one past the
        limit). Returns the summary after them."""
        offset = 10**12  # long varints: each record is well over 1 MiB
        for part in range(2):
            path = os.path.join(daemon.dir, f"big{part}.txt")
            with open(path, "w") as out:
                for i in range(part * 60000, (part + 1) * 60000):
                    out.write(f"set {offset + 2 * i} {offset + 2 * i + 1} {1 + i % 97}\n")
                out.write("commit\n")
            daemon.yoke("send", path)
        summary = daemon.summary()
        # Common knowledge: disjoint edges are all matched.
        self.assertEqual((summary["pairs"], summary["weight"]),
                         (120000, sum(1 + i % 97 for i in range(120000))))
        return summary

    def test_damage_before_the_last_segment_stops_the_daemon(self):
        daemon = Daemon(self, config="[journal]\nsegment_bytes = 1048576\n").start()
        self.big_journal(daemon)
        daemon.kill()
        segments = daemon.journal_segments()
        self.assertEqual(len(segments), 2, segments)
        records, size = segment_records(segments[0])
        with open(segments[0], "r+b") as segment:
            segment.seek(size // 2)
            byte = segment.read(1)
            segment.seek(size // 2)
            segment.write(bytes([byte[0] ^ 0x01]))

        # FORMAT.md: damage outside the last segment is an error naming the segment; the
        # journal is not opened (records after it would be lost).
        daemon.spawn()
        status = daemon.proc.wait(60)
        self.assertNotEqual(status, 0)
        failure = daemon.log_lines("cannot_serve")
        self.assertEqual(len(failure), 1, daemon.log_text())
        self.assertIn(os.path.basename(segments[0]), failure[0])
        self.assertEqual(os.path.getsize(segments[0]), size)  # left as it was

    def test_empty_new_last_segment_is_removed(self):
        daemon, script, before = self.stream_then_kill(seed=66)
        segments = daemon.journal_segments()
        records, _ = segment_records(segments[-1])
        next_position = records[-1][2] + 1
        directory = os.path.dirname(segments[-1])
        # A crash while the next segment was being created: too short for a header, or a header
        # of zero bytes (FORMAT.md: such a last segment is removed).
        for content in (b"YOKE", bytes(24)):
            path = os.path.join(directory, f"{next_position:020d}.seg")
            with open(path, "wb") as out:
                out.write(content)
            daemon.start()
            self.assertFalse(os.path.exists(path), f"{path} was not removed")
            self.assertEqual(self.check_equals_replay(daemon), before)
            daemon.kill()


if __name__ == "__main__":
    unittest.main()
