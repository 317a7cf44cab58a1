"""What a run leaves behind: JSON (:mod:`.serialize`), figures
(:mod:`.plots`), the HTML report (:mod:`.report`) and the safe writer and
terminal output (:mod:`.output`)."""
