# Sourced by ./triage, ./run-tests and .ci/run: sets TRIAGE_JAVA_HOME to a JDK 21 or newer.
# Order: $JAVA_HOME, then the usual install locations, then the java on PATH.
# Prints what to install and returns 1 when there is none.

triage_java_major() {
  # The feature release of the JDK at $1, or empty when $1 holds no working java and javac.
  [ -x "$1/bin/java" ] && [ -x "$1/bin/javac" ] || return 0
  "$1/bin/java" -XshowSettings:properties -version 2>&1 \
    | sed -n 's/^ *java\.specification\.version = \([0-9][0-9]*\).*/\1/p' | head -n 1
}

triage_find_jdk() {
  local candidates=() c v
  [ -n "${JAVA_HOME:-}" ] && candidates+=("$JAVA_HOME")
  for c in /usr/lib/jvm/* /usr/java/* /opt/java/* /opt/jdk* /Library/Java/JavaVirtualMachines/*/Contents/Home \
           "$HOME"/.sdkman/candidates/java/* "$HOME"/.jdks/*; do
    [ -d "$c" ] && candidates+=("$c")
  done
  if command -v javac >/dev/null 2>&1; then
    c=$(readlink -f "$(command -v javac)"); candidates+=("${c%/bin/javac}")
  fi
  for c in "${candidates[@]}"; do
    v=$(triage_java_major "$c")
    if [ -n "$v" ] && [ "$v" -ge 21 ]; then
      TRIAGE_JAVA_HOME="$c"
      TRIAGE_JAVA_MAJOR="$v"
      export TRIAGE_JAVA_HOME TRIAGE_JAVA_MAJOR
      # Maven's own libraries warn about sun.misc.Unsafe on JDK 24+; silence that noise (it is not ours).
      if [ "$v" -ge 24 ]; then
        case " ${MAVEN_OPTS:-} " in
          *sun-misc-unsafe-memory-access*) ;;
          *) MAVEN_OPTS="${MAVEN_OPTS:-} --sun-misc-unsafe-memory-access=allow"; export MAVEN_OPTS ;;
        esac
      fi
      return 0
    fi
  done
  cat >&2 <<'MSG'
triage: no JDK 21 or newer found (looked at $JAVA_HOME, /usr/lib/jvm/*, /usr/java/*, /opt/java/*,
        ~/.sdkman and the javac on PATH).
        Install one, for example on Debian and its derivatives:   sudo apt-get install openjdk-21-jdk
        (any vendor's JDK 21, 25 or newer works), or point JAVA_HOME at an installed one.
MSG
  return 1
}
