#!/usr/bin/env python3
"""A loopback receiver for replay cases: listens on 127.0.0.1 (an ephemeral port), prints the
port on the first line of stdout, then receives COUNT records and writes them to OUT (TCP: the
byte stream; UDP: each datagram followed by a newline). Gives up after 20 seconds.

usage: sink.py tcp|udp COUNT OUT
"""

import socket
import sys


def main():
    kind, count, out_path = sys.argv[1], int(sys.argv[2]), sys.argv[3]
    received = bytearray()
    if kind == "tcp":
        server = socket.socket(socket.AF_INET, socket.SOCK_STREAM)
        server.bind(("127.0.0.1", 0))
        server.listen(1)
        server.settimeout(20)
        print(server.getsockname()[1], flush=True)
        conn, _ = server.accept()
        conn.settimeout(20)
        while received.count(b"\n") < count:
            data = conn.recv(65536)
            if not data:
                break
            received += data
        conn.close()
    else:
        server = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
        server.bind(("127.0.0.1", 0))
        server.settimeout(20)
        print(server.getsockname()[1], flush=True)
        for _ in range(count):
            received += server.recv(65536) + b"\n"
    with open(out_path, "wb") as out:
        out.write(received)


if __name__ == "__main__":
    main()
