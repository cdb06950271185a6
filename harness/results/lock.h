/* lock.h: one writer per sweep folder and shard.
 *
 *     DIR/.lock-I-of-N      held (flock) while shard I of N runs into DIR
 *
 * Two sweeps of the same shard into one folder would run the same cells
 * at once; the second is refused, naming the first's pid. Other shards of
 * the same folder take their own lock and run side by side. A lock dies
 * with its process (flock), so a killed sweep leaves no stale lock; on a
 * file system without flock the pid written in the file decides: a live
 * process holds the lock, a dead one's lock is taken over.
 *
 *     int fd;
 *     if (results_lock(dir, shard_i, shard_n, &fd, e)) return -1;  // e names the holder
 *     ... run the shard ...
 *     results_unlock(fd);
 */
#ifndef RV_RESULTS_LOCK_H
#define RV_RESULTS_LOCK_H

#include "harness/base/err.h"

/* Take the lock of shard i of n in dir. 0 with *fd held, or -1 with e set
 * ("DIR: another sweep (pid P) is running shard I/N into this folder ..."). */
int results_lock(const char *dir, int shard_i, int shard_n, int *fd, struct err *e);

/* Release a lock taken by results_lock (fd < 0: nothing). */
void results_unlock(int fd);

#endif
