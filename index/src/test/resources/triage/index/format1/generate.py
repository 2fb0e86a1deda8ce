# Writes ref.csv and obs.tsv for the format-1 fixture (Python 3, no packages). The index folder beside them was
# made from these files by triage at commit c96bf74 (index format triage-index/1, double points and a stored copy
# of each event's binary form), run in this folder:
#   triage ingest --index index --reference ref.csv --observed obs.tsv --features a,b,c --id event --run run \
#     --block block --category sector --weight w --variation scale:w_up:w_down
import random

r = random.Random(7)
with open("ref.csv", "w") as f:
    f.write("event,run,block,sector,a,b,c,w,w_up,w_down\n")
    for i in range(60):
        w = 0.01 + r.random()
        f.write(f"{1000 + 3 * i},{100 + r.randrange(5)},{r.randrange(50)},{r.choice(['n1', 'n2', 's1'])},"
                f"{r.gauss(0, 1)!r},{r.expovariate(0.1)!r},{r.random() - 0.5!r},{w!r},{w * 1.1!r},{w * 0.9!r}\n")
with open("obs.tsv", "w") as f:
    f.write("event\trun\tblock\tsector\ta\tb\tc\n")
    for i in range(30):
        f.write(f"{7 * i}\t{100 + r.randrange(5)}\t{r.randrange(50)}\t{r.choice(['n1', 's1'])}\t"
                f"{0.3 + r.gauss(0, 1)!r}\t{r.expovariate(1 / 12)!r}\t{r.random() - 0.5!r}\n")
