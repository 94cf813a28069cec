using StudyPress.Cli;

namespace StudyPress.Tests;

/// <summary>
/// The command line advises Linux to back the heap's reservation with transparent huge pages
/// (docs/performance.md, "Huge pages"). The maps lines below follow the format of
/// <c>/proc/PID/maps</c> documented in proc(5): <c>address perms offset dev inode pathname</c>.
/// </summary>
public sealed class HugePagesTests
{
    [Fact]
    public void Reservations_AreTheLargePrivateAnonymousMappings()
    {
        string[] maps =
        [
            // The executable (a file) and its zero-initialised data.
            "55fc86e00000-55fc86e49000 r--p 00000000 fd:00 1234567                    /usr/local/bin/studypress",
            "55fc87459000-55fc8745b000 rw-p 00000000 00:00 0 ",
            // The heap's reservation: 50,552,320,000 bytes, inaccessible until committed.
            "7f8802d8e000-7f94500a0000 ---p 00000000 00:00 0 ",
            // Committed and still large: advised as well.
            "7f0000000000-7f0080000000 rw-p 00000000 00:00 0",
            // Small anonymous mappings, a large shared one, named areas and a large file.
            "7f93ce800000-7f93cec00000 ---p 00000000 00:00 0 ",
            "7f1000000000-7f1080000000 rw-s 00000000 00:01 99                         /dev/zero (deleted)",
            "7f2000000000-7f2080000000 rw-p 00000000 00:00 0                          [heap]",
            "7f3000000000-7f3080000000 r--p 00000000 fd:00 42                         /data/big.bin",
            "7ffd12345000-7ffd12366000 rw-p 00000000 00:00 0                          [stack]",
            // Not a maps line at all.
            "garbage",
            "zz-yy ---p 00000000 00:00 0",
        ];

        var found = HugePages.Reservations(maps).ToList();

        Assert.Equal(
            [(0x7f8802d8e000UL, 0x7f94500a0000L - 0x7f8802d8e000L), (0x7f0000000000UL, 0x80000000L)],
            found);
    }

    [Fact]
    public void AdviseHeap_OnLinux_FindsTheRuntimesReservation()
    {
        // The runtime reserves its heap's address range at start-up (gigabytes on 64-bit Linux);
        // the advice covers at least that one mapping. Elsewhere nothing is done.
        var advised = HugePages.AdviseHeap();
        if (OperatingSystem.IsLinux())
        {
            Assert.True(advised >= HugePages.ReservationThreshold, "advised " + advised + " bytes");
        }
        else
        {
            Assert.Equal(0, advised);
        }
    }
}
