/*
 * Start-up hook of the native build on Linux (docs/performance.md, "Huge pages").
 *
 * The native executable keeps about 10 MB of runtime type data in a zero-initialised section that
 * the runtime fills in before Main. Each first write to a 4 KB page of it is a page fault, and on
 * virtual machines a fault costs several microseconds: some 2,400 faults, a quarter of the whole
 * start-up of a small study. This constructor runs before the runtime starts and advises the
 * kernel to back the 2 MB-aligned part of the executable's zero-initialised data with transparent
 * huge pages (madvise MADV_HUGEPAGE), so that part is faulted in 2 MB at a time.
 *
 * It only gives advice: where transparent huge pages are off, or the call fails, nothing changes
 * and nothing is reported. STUDYPRESS_HUGE_PAGES=0 in the environment turns it off.
 */
#define _GNU_SOURCE
#include <link.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>

#define STUDYPRESS_HUGE_PAGE ((uintptr_t)2 << 20)

static int studypress_advise_zero_data(struct dl_phdr_info *info, size_t size, void *data)
{
    (void)size;
    (void)data;
    for (int i = 0; i < info->dlpi_phnum; i++)
    {
        const ElfW(Phdr) *ph = &info->dlpi_phdr[i];
        if (ph->p_type != PT_LOAD || (ph->p_flags & PF_W) == 0 || ph->p_memsz <= ph->p_filesz)
        {
            continue;
        }

        uintptr_t start = (uintptr_t)info->dlpi_addr + ph->p_vaddr + ph->p_filesz;
        uintptr_t end = (uintptr_t)info->dlpi_addr + ph->p_vaddr + ph->p_memsz;
        start = (start + STUDYPRESS_HUGE_PAGE - 1) & ~(STUDYPRESS_HUGE_PAGE - 1);
        end &= ~(STUDYPRESS_HUGE_PAGE - 1);
        if (end > start)
        {
            (void)madvise((void *)start, end - start, MADV_HUGEPAGE);
        }
    }

    /* The first object listed is the executable itself; the libraries are left alone. */
    return 1;
}

__attribute__((constructor)) static void studypress_huge_pages(void)
{
    const char *setting = getenv("STUDYPRESS_HUGE_PAGES");
    if (setting != NULL && strcmp(setting, "0") == 0)
    {
        return;
    }

    dl_iterate_phdr(studypress_advise_zero_data, NULL);
}
