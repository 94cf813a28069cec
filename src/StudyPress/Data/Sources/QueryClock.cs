using System.Data.Common;
using DuckDB.NET.Data;
using Microsoft.Data.Sqlite;

namespace StudyPress.Data.Sources;

/// <summary>
/// The time limit of one query: a timer that interrupts the database engine when the dataset's
/// 'timeout' has passed (SQLite: sqlite3_interrupt on the connection; DuckDB: the command's Cancel,
/// which interrupts the connection). The interrupted query then fails inside the engine, and
/// <see cref="Expired"/> tells the caller why. Reading the rows counts as part of the query.
/// </summary>
internal sealed class QueryClock : IDisposable
{
    private readonly Timer timer;
    private int expired;

    private QueryClock(DbCommand command, TimeSpan limit)
    {
        timer = new Timer(_ => Interrupt(command), null, limit, Timeout.InfiniteTimeSpan);
    }

    /// <summary>True once the limit has passed and the query was interrupted.</summary>
    public bool Expired => Volatile.Read(ref expired) == 1;

    public static QueryClock Start(DbCommand command, int seconds) => new(command, TimeSpan.FromSeconds(seconds));

    private void Interrupt(DbCommand command)
    {
        Volatile.Write(ref expired, 1);
        switch (command.Connection)
        {
            case SqliteConnection { Handle: { } handle }:
                SQLitePCL.raw.sqlite3_interrupt(handle);
                break;
            case DuckDBConnection:
                command.Cancel();
                break;
        }
    }

    public void Dispose() => timer.Dispose();
}
